import { count, desc, eq, gte, isNull, like, lte, or, type SQL } from 'drizzle-orm';
import { db } from './db';
import { captureSessions, clips, type SessionStatus } from './db/schema';
import { newId } from './ids';
import type { WorkspaceScope } from './scope';

export interface SessionFilters {
	search?: string;
	status?: SessionStatus;
	/** Capture dates as YYYY-MM-DD, inclusive. */
	capturedFrom?: string;
	capturedTo?: string;
	includeArchived?: boolean;
}

export function listSessions(scope: WorkspaceScope, filters: SessionFilters = {}) {
	const conditions: (SQL | undefined)[] = [];
	if (!filters.includeArchived) conditions.push(isNull(captureSessions.archivedAt));
	if (filters.status) conditions.push(eq(captureSessions.status, filters.status));
	if (filters.capturedFrom) conditions.push(gte(captureSessions.captureDate, filters.capturedFrom));
	if (filters.capturedTo) conditions.push(lte(captureSessions.captureDate, filters.capturedTo));
	if (filters.search) {
		const pattern = `%${filters.search.replace(/[%_]/g, (c) => '\\' + c)}%`;
		conditions.push(or(like(captureSessions.name, pattern), like(captureSessions.site, pattern)));
	}
	return db
		.select({
			id: captureSessions.id,
			name: captureSessions.name,
			site: captureSessions.site,
			captureDate: captureSessions.captureDate,
			status: captureSessions.status,
			archivedAt: captureSessions.archivedAt,
			updatedAt: captureSessions.updatedAt,
			clipCount: count(clips.id)
		})
		.from(captureSessions)
		.leftJoin(clips, eq(clips.sessionId, captureSessions.id))
		.where(scope.where(captureSessions, ...conditions))
		.groupBy(captureSessions.id)
		.orderBy(desc(captureSessions.updatedAt))
		.all();
}

export interface NewSession {
	name: string;
	site?: string;
	captureDate?: string | null;
	rigNotes?: string;
}

export function createSession(scope: WorkspaceScope, createdBy: string | null, input: NewSession) {
	const id = newId();
	db.insert(captureSessions)
		.values({
			id,
			workspaceId: scope.workspaceId,
			name: input.name,
			site: input.site ?? '',
			captureDate: input.captureDate ?? null,
			rigNotes: input.rigNotes ?? '',
			createdBy
		})
		.run();
	return scope.session(id);
}

const POSITION_ORDER = { high: 0, mid: 1, low: 2, other: 3 } as const;

/** A session's clips as the rig carries them: high, mid, low, then others, each by label. */
export function clipsOfSession(scope: WorkspaceScope, sessionId: string) {
	return db
		.select()
		.from(clips)
		.where(scope.where(clips, eq(clips.sessionId, sessionId)))
		.all()
		.sort((a, b) => POSITION_ORDER[a.cameraPosition] - POSITION_ORDER[b.cameraPosition] || a.cameraLabel.localeCompare(b.cameraLabel));
}

export function sessionWithClips(scope: WorkspaceScope, sessionId: string) {
	const session = scope.session(sessionId);
	return { session, clips: clipsOfSession(scope, sessionId) };
}


export interface SessionEdit {
	name?: string;
	site?: string;
	captureDate?: string | null;
	rigNotes?: string;
}

export class VersionConflict extends Error {
	constructor(readonly currentVersion: number) {
		super(`This capture session was changed by someone else (now version ${currentVersion}); reload to see their change.`);
	}
}

/** Edits the descriptive fields; `baseVersion` must be the version the editor saw. */
export function editSession(scope: WorkspaceScope, sessionId: string, baseVersion: number, edit: SessionEdit) {
	const session = scope.session(sessionId);
	if (session.version !== baseVersion) throw new VersionConflict(session.version);
	const result = db
		.update(captureSessions)
		.set({ ...edit, version: session.version + 1, updatedAt: new Date() })
		.where(scope.where(captureSessions, eq(captureSessions.id, sessionId), eq(captureSessions.version, baseVersion)))
		.run();
	if (result.changes === 0) throw new VersionConflict(scope.session(sessionId).version);
	return scope.session(sessionId);
}

/** Archived sessions leave the list (a filter shows them again); nothing is deleted. */
export function setArchived(scope: WorkspaceScope, sessionId: string, archived: boolean) {
	const session = scope.session(sessionId);
	db.update(captureSessions)
		.set({ archivedAt: archived ? new Date() : null, updatedAt: new Date() })
		.where(scope.where(captureSessions, eq(captureSessions.id, session.id)))
		.run();
	return scope.session(sessionId);
}
