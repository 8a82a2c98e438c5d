import { and, eq } from 'drizzle-orm';
import type { RoleName } from '$lib/permissions';
import { db } from './db';
import { memberships, users, workspaces } from './db/schema';
import { newId } from './ids';
import { hashPassword } from './passwords';

/** Creates (or updates) a person with a password and a role in a workspace. Used by seeding and tests. */
export async function upsertPerson(input: {
	email: string;
	displayName: string;
	password: string;
	workspaceId: string;
	role: RoleName;
}): Promise<string> {
	const email = input.email.toLowerCase();
	const passwordHash = await hashPassword(input.password);
	const existing = db.select().from(users).where(eq(users.email, email)).get();
	const userId = existing?.id ?? newId();
	if (existing) {
		db.update(users).set({ passwordHash, displayName: input.displayName, active: true }).where(eq(users.id, userId)).run();
	} else {
		db.insert(users).values({ id: userId, email, displayName: input.displayName, passwordHash }).run();
	}
	db.insert(memberships)
		.values({ userId, workspaceId: input.workspaceId, role: input.role })
		.onConflictDoUpdate({ target: [memberships.userId, memberships.workspaceId], set: { role: input.role } })
		.run();
	return userId;
}

export function upsertWorkspace(slug: string, name: string): string {
	const existing = db.select().from(workspaces).where(eq(workspaces.slug, slug)).get();
	if (existing) return existing.id;
	const id = newId();
	db.insert(workspaces).values({ id, slug, name }).run();
	return id;
}

export function membershipOf(userId: string, workspaceId: string) {
	return db
		.select()
		.from(memberships)
		.where(and(eq(memberships.userId, userId), eq(memberships.workspaceId, workspaceId)))
		.get();
}
