import { and, count, eq, gt, isNull } from 'drizzle-orm';
import { z } from 'zod';
import { lucia } from './auth';
import { db } from './db';
import { passwordResets, users } from './db/schema';
import { hashToken, newId, newSecretToken } from './ids';
import { sendMail } from './mail';
import { hashPassword, passwordProblem } from './passwords';
import { Refusal, parseInput } from './refusal';
import { clearFailures, throttleKeys } from './throttle';

/*
 * A password reset is a single-use link, valid for an hour, mailed to the address of
 * an active account. Asking for one answers the same whether or not the account
 * exists, and the mail goes out after the answer, so neither words nor timing tell.
 * Reset mail belongs to a person, not a workspace: it is stored without one.
 */

export const RESET_MINUTES = 60;
/** More requests than this within RESET_MINUTES are quietly dropped, so nobody can flood an inbox. */
const MAX_OPEN_RESETS = 3;

export const ForgotFields = z.object({
	email: z.string().trim().toLowerCase().min(1, 'Enter your e-mail address.').max(254, 'That e-mail address is too long.').pipe(z.email('That is not an e-mail address.'))
});

/** Starts a reset for the address if it belongs to an active account; otherwise does nothing, silently. */
export function requestPasswordReset(input: unknown, origin: string): { email: string } {
	const { email } = parseInput(ForgotFields, input);
	const user = db.select().from(users).where(eq(users.email, email)).get();
	if (!user || !user.active) return { email };

	const now = Date.now();
	const recent =
		db
			.select({ n: count() })
			.from(passwordResets)
			.where(and(eq(passwordResets.userId, user.id), gt(passwordResets.createdAt, new Date(now - RESET_MINUTES * 60_000))))
			.get()?.n ?? 0;
	if (recent >= MAX_OPEN_RESETS) return { email };

	const token = newSecretToken();
	const expiresAt = new Date(now + RESET_MINUTES * 60_000);
	db.insert(passwordResets).values({ id: newId(), userId: user.id, tokenHash: hashToken(token), expiresAt }).run();

	const link = `${origin}/reset/${token}`;
	sendMail({
		to: user.email,
		workspaceId: null,
		subject: 'Reset your Lockstep password',
		text: [
			`Hello ${user.displayName},`,
			'',
			'Somebody (hopefully you) asked to reset the password of your Lockstep account.',
			'Open this link to choose a new password:',
			link,
			'',
			`The link works once and expires in ${RESET_MINUTES} minutes (${expiresAt.toUTCString()}).`,
			'Setting a new password signs you out everywhere else.',
			'If you did not ask for this, ignore this message: your password stays as it is.',
			'',
			'— Lockstep'
		].join('\n')
	}).catch((err: unknown) => console.error('Password reset mail failed:', err));
	return { email };
}

export type ResetLookup =
	| { state: 'unknown' }
	| { state: 'expired'; expiresAt: Date }
	| { state: 'used'; usedAt: Date }
	| { state: 'open'; id: string; userId: string; email: string; expiresAt: Date };

export function lookupPasswordReset(token: string, now = new Date()): ResetLookup {
	const row = db
		.select({ reset: passwordResets, email: users.email, active: users.active })
		.from(passwordResets)
		.innerJoin(users, eq(users.id, passwordResets.userId))
		.where(eq(passwordResets.tokenHash, hashToken(token)))
		.get();
	if (!row || !row.active) return { state: 'unknown' };
	if (row.reset.usedAt) return { state: 'used', usedAt: row.reset.usedAt };
	if (row.reset.expiresAt <= now) return { state: 'expired', expiresAt: row.reset.expiresAt };
	return { state: 'open', id: row.reset.id, userId: row.reset.userId, email: row.email, expiresAt: row.reset.expiresAt };
}

export const NewPasswordFields = z
	.object({ password: z.string(), passwordAgain: z.string() })
	.superRefine((v, ctx) => {
		const problem = passwordProblem(v.password);
		if (problem) ctx.addIssue({ code: 'custom', path: ['password'], message: problem });
		else if (v.password !== v.passwordAgain) ctx.addIssue({ code: 'custom', path: ['passwordAgain'], message: 'The two passwords differ; type the same one twice.' });
	});

/**
 * Sets the new password, uses up this and every other open reset link of the person,
 * signs them out of every session, and lifts a sign-in lockout of the account.
 */
export async function completePasswordReset(token: string, input: unknown): Promise<{ email: string }> {
	const reset = lookupPasswordReset(token);
	if (reset.state === 'unknown') throw new Refusal('reset_unknown', 'This password reset link is not valid.', 404);
	if (reset.state === 'expired') throw new Refusal('reset_expired', 'This password reset link has expired.', 410);
	if (reset.state === 'used') throw new Refusal('reset_used', 'This password reset link has already been used.', 410);

	const { password } = parseInput(NewPasswordFields, input);
	const passwordHash = await hashPassword(password);
	db.transaction(() => {
		const now = new Date();
		const claimed = db
			.update(passwordResets)
			.set({ usedAt: now })
			.where(and(eq(passwordResets.id, reset.id), isNull(passwordResets.usedAt), gt(passwordResets.expiresAt, now)))
			.run();
		if (claimed.changes === 0) throw new Refusal('reset_used', 'This password reset link has already been used.', 410);
		db.update(passwordResets)
			.set({ usedAt: now })
			.where(and(eq(passwordResets.userId, reset.userId), isNull(passwordResets.usedAt)))
			.run();
		db.update(users).set({ passwordHash }).where(eq(users.id, reset.userId)).run();
	});
	await lucia.invalidateUserSessions(reset.userId);
	clearFailures(throttleKeys(reset.email, '')[0]);
	return { email: reset.email };
}
