import { error } from '@sveltejs/kit';
import { and, eq, type SQL } from 'drizzle-orm';
import type { SQLiteColumn, SQLiteTable } from 'drizzle-orm/sqlite-core';
import { db } from './db';
import { analysisJobs, captureSessions, clips } from './db/schema';

type WorkspaceTable = SQLiteTable & { workspaceId: SQLiteColumn };

/**
 * Every query of domain data goes through a scope bound to one workspace. A row of
 * another workspace is indistinguishable from a row that does not exist (404), so a
 * guessed id reveals nothing.
 */
export class WorkspaceScope {
	constructor(readonly workspaceId: string) {}

	/** The condition that keeps a query inside this workspace, joined with any others. */
	where(table: WorkspaceTable, ...conditions: (SQL | undefined)[]): SQL {
		return and(eq(table.workspaceId, this.workspaceId), ...conditions) as SQL;
	}

	session(id: string) {
		const row = db.select().from(captureSessions).where(this.where(captureSessions, eq(captureSessions.id, id))).get();
		if (!row) error(404, { code: 'not_found', message: 'No such capture session in this workspace.' });
		return row;
	}

	clip(id: string) {
		const row = db.select().from(clips).where(this.where(clips, eq(clips.id, id))).get();
		if (!row) error(404, { code: 'not_found', message: 'No such clip in this workspace.' });
		return row;
	}

	job(id: string) {
		const row = db.select().from(analysisJobs).where(this.where(analysisJobs, eq(analysisJobs.id, id))).get();
		if (!row) error(404, { code: 'not_found', message: 'No such job in this workspace.' });
		return row;
	}
}
