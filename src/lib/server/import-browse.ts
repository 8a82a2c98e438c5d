import { isHttpError } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import { readdir, realpath, stat } from 'node:fs/promises';
import { extname, isAbsolute, join, relative, sep } from 'node:path';
import { z } from 'zod';
import { publicClip } from './clips';
import { db } from './db';
import { CAMERA_POSITIONS, importRoots, type ImportRoot } from './db/schema';
import { IngestError, ingestFile } from './ingest';
import { listImportRoots } from './import-roots';
import { Refusal, parseInput } from './refusal';
import type { WorkspaceScope } from './scope';
import type { UploadOutcome } from './uploads';

/*
 * Browsing and importing from the server folders an admin named (import roots). Whatever a
 * path says, nothing outside the root is reachable: paths are relative, '..' and encoded
 * separators are refused outright, and every path is resolved through its links (realpath)
 * and must still lie inside the root's own real path.
 */

/** Extensions of the containers cameras and phones write (common practice, from memory). */
const MEDIA_EXTENSIONS = new Set(['.mp4', '.m4v', '.mov', '.qt', '.mkv', '.webm', '.avi', '.mts', '.m2ts', '.ts', '.mxf', '.mpg', '.mpeg', '.3gp', '.insv', '.lrv']);
const MAX_ENTRIES = 2000;
const MAX_PATH_LENGTH = 4096;

export interface RootSummary {
	id: string;
	name: string;
	mode: ImportRoot['mode'];
}

export interface FolderEntry {
	name: string;
	/** Path relative to the root, with '/' between folders. */
	path: string;
	kind: 'folder' | 'file';
	sizeBytes: number | null;
	modifiedAt: string;
}

export interface FolderListing {
	root: RootSummary;
	path: string;
	parent: string | null;
	entries: FolderEntry[];
	truncated: boolean;
}

export type ImportResult = UploadOutcome & { path: string };

/** The roots editors may browse: names and modes, never server paths. */
export function importRootSummaries(scope: WorkspaceScope): RootSummary[] {
	return listImportRoots(scope).map(summary);
}

function summary(root: ImportRoot): RootSummary {
	return { id: root.id, name: root.name, mode: root.mode };
}

function rootOf(scope: WorkspaceScope, rootId: string): ImportRoot {
	const root = db.select().from(importRoots).where(scope.where(importRoots, eq(importRoots.id, rootId))).get();
	if (!root) throw new Refusal('not_found', 'No such import folder in this workspace.', 404);
	return root;
}

/** The relative path's folder names, or a refusal saying what is wrong with it. */
export function pathSegments(input: unknown): string[] {
	if (input === undefined || input === null) return [];
	if (typeof input !== 'string') throw new Refusal('invalid_path', 'Give the path as text, relative to the import folder.');
	if (input.length > MAX_PATH_LENGTH) throw new Refusal('invalid_path', 'That path is too long.');
	if (input.includes('\0')) throw new Refusal('invalid_path', 'The path contains a NUL byte; give a plain path inside the import folder.');
	if (/%(2e|2f|5c|00)/i.test(input)) {
		throw new Refusal('encoded_path', 'The path contains URL-encoded characters (such as %2F or %2E); give it plainly, relative to the import folder.');
	}
	if (input.includes('\\')) throw new Refusal('invalid_path', 'Use "/" between folder names.');
	if (isAbsolute(input)) {
		throw new Refusal('absolute_path', 'Give the path relative to the import folder, not as an absolute server path.');
	}
	const segments = input.split('/').filter((s) => s !== '' && s !== '.');
	if (segments.includes('..')) throw new Refusal('path_escape', 'A path may not contain "..": only the import folder and what is inside it can be reached.');
	return segments;
}

function within(child: string, parent: string): boolean {
	const rel = relative(parent, child);
	return rel === '' || (rel !== '..' && !rel.startsWith(`..${sep}`) && !isAbsolute(rel));
}

async function rootRealPath(root: ImportRoot): Promise<string> {
	try {
		return await realpath(root.path);
	} catch {
		throw new Refusal('root_unavailable', `The import folder "${root.name}" cannot be reached on the server right now; ask an admin to check it.`, 409);
	}
}

/** Resolves a relative path inside a root to its real path, refusing anything that leads out. */
async function resolveInside(root: ImportRoot, segments: string[], want: 'folder' | 'file'): Promise<string> {
	const base = await rootRealPath(root);
	const shown = segments.join('/') || '/';
	let real: string;
	try {
		real = await realpath(join(base, ...segments));
	} catch {
		throw new Refusal('not_found', `There is no ${want} "${shown}" in "${root.name}".`, 404);
	}
	if (!within(real, base)) {
		throw new Refusal('outside_root', `"${shown}" leads outside "${root.name}" (through a link); Lockstep only reads inside the import folder.`, 403);
	}
	const info = await stat(real);
	if (want === 'folder' && !info.isDirectory()) throw new Refusal('not_a_folder', `"${shown}" is a file, not a folder.`, 400);
	if (want === 'file' && !info.isFile()) throw new Refusal('not_a_file', `"${shown}" is not a file.`, 400);
	return real;
}

/** One folder of a root: its sub-folders and media files, links that lead outside left out. */
export async function browseImportRoot(scope: WorkspaceScope, rootId: string, path: unknown): Promise<FolderListing> {
	const root = rootOf(scope, rootId);
	const segments = pathSegments(path);
	const base = await rootRealPath(root);
	const folder = await resolveInside(root, segments, 'folder');
	const dirents = await readdir(folder, { withFileTypes: true }).catch(() => {
		throw new Refusal('not_readable', `Lockstep cannot read "${segments.join('/') || '/'}" in "${root.name}": check the folder's permissions.`, 409);
	});

	const entries: FolderEntry[] = [];
	for (const dirent of dirents) {
		if (dirent.name.startsWith('.')) continue;
		const full = join(folder, dirent.name);
		const target = dirent.isSymbolicLink() ? await realpath(full).catch(() => null) : full;
		if (!target || !within(target, base)) continue;
		const info = await stat(target).catch(() => null);
		if (!info) continue;
		const entryPath = [...segments, dirent.name].join('/');
		if (info.isDirectory()) {
			entries.push({ name: dirent.name, path: entryPath, kind: 'folder', sizeBytes: null, modifiedAt: info.mtime.toISOString() });
		} else if (info.isFile() && MEDIA_EXTENSIONS.has(extname(dirent.name).toLowerCase())) {
			entries.push({ name: dirent.name, path: entryPath, kind: 'file', sizeBytes: info.size, modifiedAt: info.mtime.toISOString() });
		}
	}
	entries.sort((a, b) => (a.kind === b.kind ? a.name.localeCompare(b.name, undefined, { numeric: true }) : a.kind === 'folder' ? -1 : 1));
	return {
		root: summary(root),
		path: segments.join('/'),
		parent: segments.length ? segments.slice(0, -1).join('/') : null,
		entries: entries.slice(0, MAX_ENTRIES),
		truncated: entries.length > MAX_ENTRIES
	};
}

export const ImportRequest = z.object({
	rootId: z.string({ error: 'Choose an import folder (rootId).' }).min(1, 'Choose an import folder (rootId).'),
	files: z
		.array(z.string({ error: 'Give each file as a path relative to the import folder.' }), { error: 'List the files to import (files: ["folder/clip.mp4", …]).' })
		.min(1, 'Tick at least one file to import.')
		.max(200, 'Import at most 200 files at once.'),
	cameraLabel: z.string().trim().max(60, 'Keep the camera label under 60 characters.').optional(),
	cameraPosition: z.enum(CAMERA_POSITIONS, 'Choose high, mid, low or other.').optional()
});

/**
 * Imports files of a root into a capture session, referenced or copied as the root says.
 * Each file gets its own outcome; a refused file leaves nothing behind and does not stop the rest.
 */
export async function importFromRoot(scope: WorkspaceScope, sessionId: string, userId: string | null, input: unknown): Promise<{ root: RootSummary; results: ImportResult[] }> {
	const request = parseInput(ImportRequest, input);
	scope.session(sessionId);
	const root = rootOf(scope, request.rootId);
	const results: ImportResult[] = [];
	for (const path of [...new Set(request.files)]) {
		try {
			const segments = pathSegments(path);
			if (segments.length === 0) throw new Refusal('not_a_file', 'Give a file, not the import folder itself.');
			const real = await resolveInside(root, segments, 'file');
			const outcome = await ingestFile(scope, sessionId, userId, {
				path: real,
				originalName: segments[segments.length - 1],
				placement: root.mode,
				cameraLabel: request.cameraLabel,
				cameraPosition: request.cameraPosition
			});
			results.push(
				outcome.kind === 'added'
					? { path, kind: 'added', clip: publicClip(outcome.clip), warning: outcome.warning }
					: { path, kind: 'duplicate', clip: publicClip(outcome.clip) }
			);
		} catch (err) {
			if (err instanceof Refusal || err instanceof IngestError) results.push({ path, kind: 'refused', code: err.code, message: err.message });
			else if (isHttpError(err)) throw err;
			else {
				console.error(`Import of ${path} from root ${root.id} failed`, err);
				results.push({ path, kind: 'refused', code: 'server_error', message: 'This file could not be imported; the error has been logged.' });
			}
		}
	}
	return { root: summary(root), results };
}
