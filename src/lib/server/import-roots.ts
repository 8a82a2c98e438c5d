import { asc, eq } from 'drizzle-orm';
import { constants } from 'node:fs';
import { access, realpath, stat } from 'node:fs/promises';
import { dirname, isAbsolute, relative, resolve, sep } from 'node:path';
import { z } from 'zod';
import { databasePath, db } from './db';
import { importRoots, type ImportRoot } from './db/schema';
import { newId } from './ids';
import { Refusal, parseInput } from './refusal';
import type { WorkspaceScope } from './scope';

/*
 * Import roots are server folders an admin names so editors can bring clips in from
 * them: by reference (the file stays where it is) or by copy (into Lockstep's media
 * store). One installation serves many workspaces, so a root may never reach into
 * Lockstep's own data, where other workspaces' media and the database live.
 */

export const IMPORT_MODES = ['reference', 'copy'] as const;
export type ImportMode = (typeof IMPORT_MODES)[number];

export const ImportRootFields = z.object({
	name: z.string().trim().min(1, 'Give the folder a name people will recognise.').max(100, 'Keep the name under 100 characters.'),
	path: z
		.string()
		.trim()
		.min(1, 'Enter the folder path on the server.')
		.max(1024, 'That path is too long.')
		.refine((p) => isAbsolute(p), 'Give an absolute path, starting with /.'),
	mode: z.enum(IMPORT_MODES, 'Choose whether clips are referenced in place or copied.')
});

export function listImportRoots(scope: WorkspaceScope): ImportRoot[] {
	return db.select().from(importRoots).where(scope.where(importRoots)).orderBy(asc(importRoots.name)).all();
}

export async function addImportRoot(scope: WorkspaceScope, input: unknown): Promise<ImportRoot> {
	const fields = parseInput(ImportRootFields, input);
	const path = await checkedFolder(fields.path);
	const existing = listImportRoots(scope);
	if (existing.some((r) => r.name.toLowerCase() === fields.name.toLowerCase())) {
		throw new Refusal('duplicate_name', `There is already an import folder named "${fields.name}".`, 409);
	}
	const same = existing.find((r) => r.path === path);
	if (same) throw new Refusal('duplicate_path', `That folder is already named "${same.name}".`, 409);
	const row = { id: newId(), workspaceId: scope.workspaceId, name: fields.name, path, mode: fields.mode };
	db.insert(importRoots).values(row).run();
	const created = db.select().from(importRoots).where(eq(importRoots.id, row.id)).get();
	if (!created) throw new Error('Import root vanished after insert');
	return created;
}

export function removeImportRoot(scope: WorkspaceScope, id: string): void {
	const result = db.delete(importRoots).where(scope.where(importRoots, eq(importRoots.id, id))).run();
	if (result.changes === 0) throw new Refusal('not_found', 'No such import folder in this workspace.', 404);
}

/** The folder's real path, after checking it exists, is a readable directory and keeps out of Lockstep's data. */
async function checkedFolder(input: string): Promise<string> {
	const given = resolve(input);
	let real: string;
	try {
		real = await realpath(given);
	} catch {
		throw new Refusal('path_missing', `There is no folder at ${given} on the server.`, 400);
	}
	const info = await stat(real);
	if (!info.isDirectory()) throw new Refusal('not_a_folder', `${given} is a file, not a folder.`, 400);
	try {
		await access(real, constants.R_OK | constants.X_OK);
	} catch {
		throw new Refusal('not_readable', `Lockstep cannot read ${given}: check the folder's permissions.`, 400);
	}
	for (const own of await lockstepDataFolders()) {
		if (within(real, own) || within(own, real)) {
			throw new Refusal('reserved_path', `${given} overlaps Lockstep's own data folder (${own}); choose a folder of footage instead.`, 400);
		}
	}
	return real;
}

async function lockstepDataFolders(): Promise<string[]> {
	const folders = [dirname(databasePath()), resolve(process.env.MEDIA_ROOT ?? 'data/media')];
	return Promise.all(folders.map((f) => realpath(f).catch(() => f)));
}

function within(child: string, parent: string): boolean {
	const rel = relative(parent, child);
	return rel === '' || (rel !== '..' && !rel.startsWith(`..${sep}`) && !isAbsolute(rel));
}
