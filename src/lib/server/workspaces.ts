import { asc, eq } from 'drizzle-orm';
import type { RoleName } from '$lib/permissions';
import { db } from './db';
import { memberships, workspaces } from './db/schema';

export function membershipsOf(userId: string): { workspaceId: string; workspaceName: string; workspaceSlug: string; role: RoleName }[] {
	return db
		.select({
			workspaceId: workspaces.id,
			workspaceName: workspaces.name,
			workspaceSlug: workspaces.slug,
			role: memberships.role
		})
		.from(memberships)
		.innerJoin(workspaces, eq(workspaces.id, memberships.workspaceId))
		.where(eq(memberships.userId, userId))
		.orderBy(asc(workspaces.name))
		.all();
}

export const WORKSPACE_COOKIE = 'lockstep_workspace';
