import { and, asc, count, eq, ne } from 'drizzle-orm';
import { ROLE_LABELS, type RoleName } from '$lib/permissions';
import { lucia } from './auth';
import { db } from './db';
import { memberships, users, workspaces } from './db/schema';
import { Refusal } from './refusal';
import type { WorkspaceScope } from './scope';

/*
 * The people of one workspace: their role there and whether their account is active.
 * A workspace always keeps at least one active admin, or nobody could manage it.
 */

export interface Member {
	userId: string;
	email: string;
	displayName: string;
	role: RoleName;
	active: boolean;
	joinedAt: Date;
	/** How many other workspaces this person belongs to (their names stay private). */
	otherWorkspaces: number;
}

export function listMembers(scope: WorkspaceScope): Member[] {
	const rows = db
		.select({
			userId: users.id,
			email: users.email,
			displayName: users.displayName,
			role: memberships.role,
			active: users.active,
			joinedAt: memberships.createdAt
		})
		.from(memberships)
		.innerJoin(users, eq(users.id, memberships.userId))
		.where(eq(memberships.workspaceId, scope.workspaceId))
		.orderBy(asc(users.displayName))
		.all();
	const counts = new Map(
		db
			.select({ userId: memberships.userId, n: count() })
			.from(memberships)
			.where(ne(memberships.workspaceId, scope.workspaceId))
			.groupBy(memberships.userId)
			.all()
			.map((r) => [r.userId, r.n])
	);
	return rows.map((r) => ({ ...r, otherWorkspaces: counts.get(r.userId) ?? 0 }));
}

function memberOrRefuse(scope: WorkspaceScope, userId: string) {
	const row = db
		.select({ userId: users.id, displayName: users.displayName, active: users.active, role: memberships.role })
		.from(memberships)
		.innerJoin(users, eq(users.id, memberships.userId))
		.where(and(eq(memberships.workspaceId, scope.workspaceId), eq(memberships.userId, userId)))
		.get();
	if (!row) throw new Refusal('not_found', 'That person is not a member of this workspace.', 404);
	return row;
}

function otherActiveAdmins(scope: WorkspaceScope, userId: string): number {
	return (
		db
			.select({ n: count() })
			.from(memberships)
			.innerJoin(users, eq(users.id, memberships.userId))
			.where(
				and(
					eq(memberships.workspaceId, scope.workspaceId),
					eq(memberships.role, 'admin'),
					eq(users.active, true),
					ne(memberships.userId, userId)
				)
			)
			.get()?.n ?? 0
	);
}

function workspaceName(scope: WorkspaceScope): string {
	return db.select({ name: workspaces.name }).from(workspaces).where(eq(workspaces.id, scope.workspaceId)).get()?.name ?? 'this workspace';
}

/** Refuses when taking `userId` out of the admins would leave the workspace without an active admin. */
function keepAnAdmin(scope: WorkspaceScope, member: { userId: string; displayName: string; role: RoleName; active: boolean }, doing: string) {
	if (member.role !== 'admin' || !member.active) return;
	if (otherActiveAdmins(scope, member.userId) > 0) return;
	throw new Refusal(
		'last_admin',
		`${member.displayName} is the last active admin of ${workspaceName(scope)}, so they cannot be ${doing}. Make someone else an admin first.`,
		409
	);
}

export function changeRole(scope: WorkspaceScope, userId: string, role: RoleName): Member {
	db.transaction(() => {
		const member = memberOrRefuse(scope, userId);
		if (member.role === role) return;
		if (role !== 'admin') keepAnAdmin(scope, member, `made ${ROLE_LABELS[role].toLowerCase()}`);
		db.update(memberships)
			.set({ role })
			.where(and(eq(memberships.workspaceId, scope.workspaceId), eq(memberships.userId, userId)))
			.run();
	});
	return memberView(scope, userId);
}

/**
 * Deactivation is of the account (users.active): the person can no longer sign in and
 * their sessions end. Because that would also lock them out of workspaces this admin
 * does not manage, it is refused for people who belong elsewhere too; remove them
 * from this workspace instead.
 */
export async function setActive(scope: WorkspaceScope, actingUserId: string | null, userId: string, active: boolean): Promise<Member> {
	db.transaction(() => {
		const member = memberOrRefuse(scope, userId);
		if (member.active === active) return;
		if (!active) {
			if (userId === actingUserId) throw new Refusal('self', 'You cannot deactivate your own account. Ask another admin.', 409);
			keepAnAdmin(scope, member, 'deactivated');
			const elsewhere = db
				.select({ n: count() })
				.from(memberships)
				.where(and(eq(memberships.userId, userId), ne(memberships.workspaceId, scope.workspaceId)))
				.get()?.n ?? 0;
			if (elsewhere > 0) {
				throw new Refusal(
					'member_elsewhere',
					`${member.displayName} also belongs to other workspaces, and deactivating the account would lock them out there too. Remove them from this workspace instead.`,
					409
				);
			}
		}
		db.update(users).set({ active }).where(eq(users.id, userId)).run();
	});
	if (!active) await lucia.invalidateUserSessions(userId);
	return memberView(scope, userId);
}

/** Takes a person out of this workspace; their account and other workspaces stay. */
export function removeMember(scope: WorkspaceScope, userId: string): void {
	db.transaction(() => {
		const member = memberOrRefuse(scope, userId);
		keepAnAdmin(scope, member, 'removed');
		db.delete(memberships)
			.where(and(eq(memberships.workspaceId, scope.workspaceId), eq(memberships.userId, userId)))
			.run();
	});
}

function memberView(scope: WorkspaceScope, userId: string): Member {
	const member = listMembers(scope).find((m) => m.userId === userId);
	if (!member) throw new Refusal('not_found', 'That person is not a member of this workspace.', 404);
	return member;
}

/** Whether an address already belongs to a member of this workspace. */
export function isMemberEmail(scope: WorkspaceScope, email: string): boolean {
	return !!db
		.select({ userId: users.id })
		.from(memberships)
		.innerJoin(users, eq(users.id, memberships.userId))
		.where(and(eq(memberships.workspaceId, scope.workspaceId), eq(users.email, email.trim().toLowerCase())))
		.get();
}
