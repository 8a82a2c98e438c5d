import { desc, eq } from 'drizzle-orm';
import { db } from './db';
import { activity, users } from './db/schema';
import { newId } from './ids';
import type { WorkspaceScope } from './scope';

export function recordActivity(
	scope: WorkspaceScope,
	entry: { sessionId: string | null; userId: string | null; kind: string; message: string }
): void {
	db.insert(activity)
		.values({ id: newId(), workspaceId: scope.workspaceId, sessionId: entry.sessionId, userId: entry.userId, kind: entry.kind, message: entry.message })
		.run();
}

export function activityOfSession(scope: WorkspaceScope, sessionId: string, limit = 50) {
	return db
		.select({
			id: activity.id,
			kind: activity.kind,
			message: activity.message,
			createdAt: activity.createdAt,
			who: users.displayName
		})
		.from(activity)
		.leftJoin(users, eq(users.id, activity.userId))
		.where(scope.where(activity, eq(activity.sessionId, sessionId)))
		.orderBy(desc(activity.createdAt))
		.limit(limit)
		.all();
}
