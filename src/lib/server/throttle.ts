import { eq } from 'drizzle-orm';
import { db } from './db';
import { signInFailures } from './db/schema';

/*
 * Failed sign-ins are counted per account and per address in the database, so a
 * restart does not hand an attacker a fresh allowance.
 */

const WINDOW_MS = 15 * 60_000;
const limits = {
	account: Number(process.env.SIGNIN_MAX_FAILURES_ACCOUNT ?? 5),
	address: Number(process.env.SIGNIN_MAX_FAILURES_ADDRESS ?? 50)
};
const LOCK_MS = Number(process.env.SIGNIN_LOCK_SECONDS ?? 15 * 60) * 1000;

export type ThrottleKey = `account:${string}` | `address:${string}`;

export function throttleKeys(email: string, address: string): ThrottleKey[] {
	return [`account:${email.trim().toLowerCase()}`, `address:${address}`];
}

/** Seconds until sign-in may be tried again, or 0 when it may be tried now. */
export function retryAfterSeconds(keys: ThrottleKey[], now = Date.now()): number {
	let wait = 0;
	for (const key of keys) {
		const row = db.select().from(signInFailures).where(eq(signInFailures.key, key)).get();
		const until = row?.lockedUntil?.getTime() ?? 0;
		if (until > now) wait = Math.max(wait, Math.ceil((until - now) / 1000));
	}
	return wait;
}

export function recordFailure(keys: ThrottleKey[], now = Date.now()): void {
	for (const key of keys) {
		const limit = key.startsWith('account:') ? limits.account : limits.address;
		const row = db.select().from(signInFailures).where(eq(signInFailures.key, key)).get();
		const fresh = !row || now - row.windowStartedAt.getTime() > WINDOW_MS;
		const failures = fresh ? 1 : row.failures + 1;
		const windowStartedAt = fresh ? new Date(now) : row.windowStartedAt;
		const lockedUntil = failures >= limit ? new Date(now + LOCK_MS) : null;
		db.insert(signInFailures)
			.values({ key, failures, windowStartedAt, lockedUntil })
			.onConflictDoUpdate({ target: signInFailures.key, set: { failures, windowStartedAt, lockedUntil } })
			.run();
	}
}

export function clearFailures(key: ThrottleKey): void {
	db.delete(signInFailures).where(eq(signInFailures.key, key)).run();
}
