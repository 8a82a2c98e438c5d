import { eq } from 'drizzle-orm';
import { db } from './db';
import { users } from './db/schema';
import { lucia } from './auth';
import { verifyPassword } from './passwords';
import { clearFailures, recordFailure, retryAfterSeconds, throttleKeys } from './throttle';

export type SignInOutcome =
	| { kind: 'signed_in'; sessionCookie: ReturnType<typeof lucia.createSessionCookie> }
	| { kind: 'throttled'; retryAfterSeconds: number }
	| { kind: 'invalid' };

/** Checks a password sign-in, counting failures per account and per address. */
export async function signIn(emailInput: string, password: string, address: string): Promise<SignInOutcome> {
	const email = emailInput.trim().toLowerCase();
	const keys = throttleKeys(email, address);
	const wait = retryAfterSeconds(keys);
	if (wait > 0) return { kind: 'throttled', retryAfterSeconds: wait };

	const user = db.select().from(users).where(eq(users.email, email)).get();
	// Verify even for unknown accounts so response time does not reveal which exist.
	const ok = await verifyPassword(user?.passwordHash ?? DUMMY_HASH, password);
	if (!user || !ok || !user.active) {
		recordFailure(keys);
		const after = retryAfterSeconds(keys);
		return after > 0 ? { kind: 'throttled', retryAfterSeconds: after } : { kind: 'invalid' };
	}
	clearFailures(keys[0]);
	const session = await lucia.createSession(user.id, {});
	return { kind: 'signed_in', sessionCookie: lucia.createSessionCookie(session.id) };
}

// argon2id hash of a random string nobody knows; only used to spend the same time.
const DUMMY_HASH =
	'$argon2id$v=19$m=19456,t=2,p=1$TKNQIyzscLwKhd5sd7xc4Q$+QtZlkkCdHK2CV76U/n3HdJ2jAPUm6On2iRFURyXIgo';
