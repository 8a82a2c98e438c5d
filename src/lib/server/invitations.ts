import { and, desc, eq, gt, isNull } from 'drizzle-orm';
import { z } from 'zod';
import { ROLE_DESCRIPTIONS, ROLE_LABELS, ROLE_NAMES, type RoleName } from '$lib/permissions';
import { lucia } from './auth';
import { db } from './db';
import { invitations, memberships, users, workspaces } from './db/schema';
import { hashToken, newId, newSecretToken } from './ids';
import { sendMail } from './mail';
import { isMemberEmail } from './members';
import { hashPassword, passwordProblem } from './passwords';
import { Refusal, parseInput } from './refusal';
import type { WorkspaceScope } from './scope';
import { signIn } from './sign-in';

/*
 * An invitation is a single-use link e-mailed to an address. Only the hash of its
 * token is stored. Opening it creates the account (name and password), or, when the
 * address already has one, adds the membership once the person proves it is theirs.
 */

export const INVITATION_DAYS = 7;
const DAY_MS = 24 * 60 * 60 * 1000;

export const InvitationFields = z.object({
	email: z.string().trim().toLowerCase().min(1, 'Enter the e-mail address to invite.').max(254, 'That e-mail address is too long.').pipe(z.email('That is not an e-mail address.')),
	role: z.enum(ROLE_NAMES, 'Choose a role: admin, editor, reviewer or processor.')
});

export interface PendingInvitation {
	id: string;
	email: string;
	role: RoleName;
	invitedByName: string | null;
	createdAt: Date;
	expiresAt: Date;
}

/** Invites an address into this workspace and mails the link. Inviting again replaces an open invitation. */
export async function invitePerson(
	scope: WorkspaceScope,
	input: unknown,
	by: { userId: string | null; origin: string }
): Promise<PendingInvitation> {
	const { email, role } = parseInput(InvitationFields, input);
	if (isMemberEmail(scope, email)) {
		throw new Refusal('already_member', `${email} is already a member of this workspace; change their role in the list instead.`, 409);
	}
	const workspace = db.select().from(workspaces).where(eq(workspaces.id, scope.workspaceId)).get();
	if (!workspace) throw new Refusal('not_found', 'This workspace no longer exists.', 404);
	const inviter = by.userId ? db.select().from(users).where(eq(users.id, by.userId)).get() : undefined;

	const token = newSecretToken();
	const id = newId();
	const expiresAt = new Date(Date.now() + INVITATION_DAYS * DAY_MS);
	db.transaction(() => {
		db.delete(invitations)
			.where(and(eq(invitations.workspaceId, scope.workspaceId), eq(invitations.email, email), isNull(invitations.acceptedAt)))
			.run();
		db.insert(invitations)
			.values({ id, workspaceId: scope.workspaceId, email, role, tokenHash: hashToken(token), invitedBy: inviter?.id ?? null, expiresAt })
			.run();
	});

	const who = inviter ? `${inviter.displayName} (${inviter.email})` : `An admin of ${workspace.name}`;
	const link = `${by.origin}/invite/${token}`;
	try {
		await sendMail({
			to: email,
			workspaceId: scope.workspaceId,
			subject: `${inviter?.displayName ?? 'An admin'} invited you to ${workspace.name} on Lockstep`,
			text: [
				'Hello,',
				'',
				`${who} invited you to join "${workspace.name}" on Lockstep as ${article(role)} ${ROLE_LABELS[role].toLowerCase()}: ${ROLE_DESCRIPTIONS[role].toLowerCase()}.`,
				'',
				'Open this link to accept and choose your password:',
				link,
				'',
				`The link works once and expires in ${INVITATION_DAYS} days (${expiresAt.toUTCString()}).`,
				'If you did not expect this invitation, you can ignore this message.',
				'',
				'— Lockstep'
			].join('\n')
		});
	} catch (err) {
		db.delete(invitations).where(eq(invitations.id, id)).run();
		console.error('Invitation mail failed:', err);
		throw new Refusal('mail_failed', 'The invitation could not be sent: the mail server did not accept it. Try again in a moment.', 502);
	}
	return { id, email, role, invitedByName: inviter?.displayName ?? null, createdAt: new Date(), expiresAt };
}

function article(role: RoleName): string {
	return role === 'admin' || role === 'editor' ? 'an' : 'a';
}

export function listPendingInvitations(scope: WorkspaceScope): PendingInvitation[] {
	return db
		.select({
			id: invitations.id,
			email: invitations.email,
			role: invitations.role,
			invitedByName: users.displayName,
			createdAt: invitations.createdAt,
			expiresAt: invitations.expiresAt
		})
		.from(invitations)
		.leftJoin(users, eq(users.id, invitations.invitedBy))
		.where(and(eq(invitations.workspaceId, scope.workspaceId), isNull(invitations.acceptedAt)))
		.orderBy(desc(invitations.createdAt))
		.all();
}

/** Withdraws an open invitation of this workspace; its link stops working. */
export function withdrawInvitation(scope: WorkspaceScope, invitationId: string): void {
	const result = db
		.delete(invitations)
		.where(and(eq(invitations.id, invitationId), eq(invitations.workspaceId, scope.workspaceId), isNull(invitations.acceptedAt)))
		.run();
	if (result.changes === 0) throw new Refusal('not_found', 'No open invitation with that id in this workspace.', 404);
}

export type InvitationLookup =
	| { state: 'unknown' }
	| { state: 'expired'; email: string; workspaceName: string; inviterName: string | null; expiresAt: Date }
	| { state: 'used'; email: string; workspaceName: string; inviterName: string | null; acceptedAt: Date }
	| {
			state: 'open';
			id: string;
			email: string;
			role: RoleName;
			workspaceId: string;
			workspaceName: string;
			inviterName: string | null;
			expiresAt: Date;
			/** 'new' sets a name and password; 'existing' proves the account with its password. */
			account: 'new' | 'existing' | 'deactivated';
			existingUserId: string | null;
	  };

export function lookupInvitation(token: string, now = new Date()): InvitationLookup {
	const row = db
		.select({ invitation: invitations, workspaceName: workspaces.name, inviterName: users.displayName })
		.from(invitations)
		.innerJoin(workspaces, eq(workspaces.id, invitations.workspaceId))
		.leftJoin(users, eq(users.id, invitations.invitedBy))
		.where(eq(invitations.tokenHash, hashToken(token)))
		.get();
	if (!row) return { state: 'unknown' };
	const { invitation, workspaceName, inviterName } = row;
	if (invitation.acceptedAt) return { state: 'used', email: invitation.email, workspaceName, inviterName, acceptedAt: invitation.acceptedAt };
	if (invitation.expiresAt <= now) return { state: 'expired', email: invitation.email, workspaceName, inviterName, expiresAt: invitation.expiresAt };
	const existing = db.select().from(users).where(eq(users.email, invitation.email)).get();
	const account = !existing || !existing.passwordHash ? 'new' : existing.active ? 'existing' : 'deactivated';
	return {
		state: 'open',
		id: invitation.id,
		email: invitation.email,
		role: invitation.role,
		workspaceId: invitation.workspaceId,
		workspaceName,
		inviterName,
		expiresAt: invitation.expiresAt,
		account,
		existingUserId: existing?.id ?? null
	};
}

export const NewAccountFields = z
	.object({
		displayName: z.string().trim().min(1, 'Enter the name your team will see.').max(100, 'Keep the name under 100 characters.'),
		password: z.string(),
		passwordAgain: z.string()
	})
	.superRefine((v, ctx) => {
		const problem = passwordProblem(v.password);
		if (problem) ctx.addIssue({ code: 'custom', path: ['password'], message: problem });
		else if (v.password !== v.passwordAgain) ctx.addIssue({ code: 'custom', path: ['passwordAgain'], message: 'The two passwords differ; type the same one twice.' });
	});

export const ExistingAccountFields = z.object({ password: z.string().min(1, 'Enter the password of your Lockstep account.') });

export interface Acceptance {
	userId: string;
	workspaceId: string;
	/** A fresh sign-in session for the person, unless they were already signed in as themselves. */
	sessionCookie: ReturnType<typeof lucia.createSessionCookie> | null;
}

/**
 * Accepts an invitation. New accounts give a name and password; existing accounts
 * give their password (checked and throttled like any sign-in), unless the person is
 * already signed in as that account.
 */
export async function acceptInvitation(
	token: string,
	input: unknown,
	context: { signedInUserId: string | null; clientAddress: string }
): Promise<Acceptance> {
	const invitation = lookupInvitation(token);
	if (invitation.state === 'unknown') throw new Refusal('invitation_unknown', 'This invitation link is not valid.', 404);
	if (invitation.state === 'expired') throw new Refusal('invitation_expired', 'This invitation has expired.', 410);
	if (invitation.state === 'used') throw new Refusal('invitation_used', 'This invitation has already been used.', 410);
	if (invitation.account === 'deactivated') {
		throw new Refusal('account_deactivated', `The account for ${invitation.email} is deactivated. Ask an admin to reactivate it.`, 403);
	}

	if (invitation.account === 'existing' && invitation.existingUserId) {
		const userId = invitation.existingUserId;
		let sessionCookie: Acceptance['sessionCookie'] = null;
		if (context.signedInUserId !== userId) {
			const { password } = parseInput(ExistingAccountFields, input);
			const outcome = await signIn(invitation.email, password, context.clientAddress);
			if (outcome.kind === 'throttled') {
				const minutes = Math.ceil(outcome.retryAfterSeconds / 60);
				throw new Refusal('too_many_attempts', `Too many failed sign-ins. Try again in ${minutes} minute${minutes === 1 ? '' : 's'}.`, 429);
			}
			if (outcome.kind === 'invalid') throw new Refusal('wrong_password', `That is not the password of ${invitation.email}.`, 400);
			sessionCookie = outcome.sessionCookie;
		}
		claim(invitation.id, () => addMembership(userId, invitation.workspaceId, invitation.role));
		return { userId, workspaceId: invitation.workspaceId, sessionCookie };
	}

	const fields = parseInput(NewAccountFields, input);
	const passwordHash = await hashPassword(fields.password);
	const userId = invitation.existingUserId ?? newId();
	claim(invitation.id, () => {
		if (invitation.existingUserId) {
			db.update(users).set({ displayName: fields.displayName, passwordHash, active: true }).where(eq(users.id, userId)).run();
		} else {
			db.insert(users).values({ id: userId, email: invitation.email, displayName: fields.displayName, passwordHash }).run();
		}
		addMembership(userId, invitation.workspaceId, invitation.role);
	});
	const session = await lucia.createSession(userId, {});
	return { userId, workspaceId: invitation.workspaceId, sessionCookie: lucia.createSessionCookie(session.id) };
}

/** Marks the invitation used and applies its effect in one transaction, so a link works exactly once. */
function claim(invitationId: string, apply: () => void): void {
	db.transaction(() => {
		const result = db
			.update(invitations)
			.set({ acceptedAt: new Date() })
			.where(and(eq(invitations.id, invitationId), isNull(invitations.acceptedAt), gt(invitations.expiresAt, new Date())))
			.run();
		if (result.changes === 0) throw new Refusal('invitation_used', 'This invitation has already been used.', 410);
		apply();
	});
}

function addMembership(userId: string, workspaceId: string, role: RoleName): void {
	db.insert(memberships).values({ userId, workspaceId, role }).onConflictDoNothing().run();
}
