import { isHttpError, type RequestEvent } from '@sveltejs/kit';
import { FileStore } from '@tus/file-store';
import { Server, Upload } from '@tus/server';
import { readdir, rm, stat } from 'node:fs/promises';
import { join } from 'node:path';
import { z } from 'zod';
import { publicClip, type PublicClip } from './clips';
import { CAMERA_POSITIONS } from './db/schema';
import type { Allowed } from './guard';
import { IngestError, ingestFile } from './ingest';
import type { WorkspaceScope } from './scope';
import { uploadsDir } from './storage';

/*
 * Resumable uploads over tus (https://tus.io/protocols/resumable-upload). Partial files and
 * their tus records live on disk in MEDIA_ROOT/uploads, so an upload resumes after a dropped
 * connection or a server restart. A finished upload is ingested at once: the answer to its
 * last PATCH says what became of it, and that answer is kept on the upload's record so a
 * client that lost the answer learns it from a HEAD.
 */

export const UPLOADS_PATH = '/api/uploads';

/** What became of a finished upload, as the browser sees it. */
export type UploadOutcome =
	| { kind: 'added'; clip: PublicClip; warning: string | null }
	| { kind: 'duplicate'; clip: PublicClip }
	| { kind: 'refused'; code: string; message: string };

/** Header that carries a finished upload's outcome on HEAD (base64url JSON). */
export const OUTCOME_HEADER = 'Lockstep-Outcome';

const GIB = 1024 ** 3;

function bytesSetting(name: string, fallback: string): number {
	const value = (process.env[name] ?? '').trim() || fallback;
	// Same notation as adapter-node's BODY_SIZE_LIMIT: a number of bytes, or with K, M or G.
	const unit = { K: 1024, M: 1024 ** 2, G: 1024 ** 3 }[value.slice(-1).toUpperCase()];
	const bytes = unit ? Number(value.slice(0, -1)) * unit : Number(value);
	if (!(bytes > 0)) throw new Error(`${name}=${value} is not a size; give bytes, or a number with K, M or G.`);
	return bytes;
}

/** Upload limits, from the environment (see .env.example). */
export function uploadSettings() {
	const maxSizeBytes = bytesSetting('UPLOAD_MAX_BYTES', '64G');
	// Each PATCH must fit adapter-node's request body limit, or it answers 413.
	const bodyLimitBytes = bytesSetting('BODY_SIZE_LIMIT', '512K');
	const chunkSizeBytes = Math.floor(Math.min(bytesSetting('UPLOAD_CHUNK_BYTES', '64M'), bodyLimitBytes));
	const expiryHours = Number(process.env.UPLOAD_EXPIRY_HOURS ?? 7 * 24) || 7 * 24;
	return { endpoint: UPLOADS_PATH, maxSizeBytes, chunkSizeBytes, expiryHours };
}

const optionalText = (max: number, message: string) =>
	z.preprocess((v) => (typeof v === 'string' && v.trim() === '' ? undefined : v), z.string().trim().max(max, message).optional());

const UploadMetadata = z.object({
	sessionId: z.string({ error: 'Say which capture session the upload belongs to (metadata "sessionId").' }).regex(/^[A-Za-z0-9_-]{6,64}$/, 'That capture session id is malformed.'),
	filename: z.string({ error: 'Give the file name (metadata "filename").' }).trim().min(1, 'Give the file name (metadata "filename").').max(255, 'That file name is too long.'),
	cameraLabel: optionalText(60, 'Keep the camera label under 60 characters.'),
	cameraPosition: z.preprocess((v) => (v === '' ? undefined : v), z.enum(CAMERA_POSITIONS, 'Choose high, mid, low or other.').optional())
});
type UploadMetadata = z.output<typeof UploadMetadata>;

interface Caller {
	scope: WorkspaceScope;
	userId: string | null;
}

/** The checked caller of each request tus is handling, for its hooks. */
const callers = new WeakMap<Request, Caller>();
/** Finishes in progress, so a HEAD arriving during one waits for it instead of starting another. */
const finishing = new Map<string, Promise<UploadOutcome>>();

/** A tus-style failure (status_code and body), answered as { error: { code, message } }. */
function tusFailure(status: number, code: string, message: string) {
	return { status_code: status, body: JSON.stringify({ error: { code, message } }) };
}

let tus: { server: Server; store: FileStore } | undefined;

function tusServer() {
	if (tus) return tus;
	const settings = uploadSettings();
	// Expiry is left to the sweep below: tus's own check would re-read an upload that finishing
	// has already moved away (a zero-byte file is finished by the very request that creates it).
	const store = new FileStore({ directory: uploadsDir() });
	const server = new Server({
		path: UPLOADS_PATH,
		datastore: store,
		relativeLocation: true,
		maxSize: settings.maxSizeBytes,
		async onUploadCreate(req, upload) {
			const caller = callers.get(req);
			if (!caller) throw tusFailure(500, 'server_error', 'Upload hook called outside a checked request.');
			const parsed = UploadMetadata.safeParse(upload.metadata ?? {});
			if (!parsed.success) throw tusFailure(400, 'invalid_metadata', parsed.error.issues[0].message);
			try {
				caller.scope.session(parsed.data.sessionId);
			} catch (err) {
				if (isHttpError(err)) throw tusFailure(404, 'not_found', 'No such capture session in this workspace.');
				throw err;
			}
			const metadata: Record<string, string> = {
				sessionId: parsed.data.sessionId,
				filename: parsed.data.filename,
				workspaceId: caller.scope.workspaceId,
				createdBy: caller.userId ?? ''
			};
			if (parsed.data.cameraLabel) metadata.cameraLabel = parsed.data.cameraLabel;
			if (parsed.data.cameraPosition) metadata.cameraPosition = parsed.data.cameraPosition;
			return { metadata };
		},
		async onUploadFinish(req, upload) {
			const caller = callers.get(req);
			if (!caller) throw tusFailure(500, 'server_error', 'Upload hook called outside a checked request.');
			const outcome = await finishUpload(caller, upload);
			const headers = { 'Content-Type': 'application/json' };
			if (outcome.kind === 'refused') return { status_code: 422, headers, body: JSON.stringify({ error: { code: outcome.code, message: outcome.message }, outcome }) };
			return { status_code: 200, headers, body: JSON.stringify({ outcome }) };
		}
	});
	tus = { server, store };
	scheduleSweep(settings.expiryHours);
	return tus;
}

/** Ingests a fully received upload once, and records what became of it on the upload. */
function finishUpload(caller: Caller, upload: Upload): Promise<UploadOutcome> {
	const running = finishing.get(upload.id);
	if (running) return running;
	const work = (async (): Promise<UploadOutcome> => {
		const { store } = tusServer();
		const metadata = checkedMetadata(upload);
		const path = join(uploadsDir(), upload.id);
		let outcome: UploadOutcome;
		try {
			const result = await ingestFile(caller.scope, metadata.sessionId, caller.userId, {
				path,
				originalName: metadata.filename,
				placement: 'move',
				cameraLabel: metadata.cameraLabel,
				cameraPosition: metadata.cameraPosition
			});
			outcome =
				result.kind === 'added'
					? { kind: 'added', clip: publicClip(result.clip), warning: result.warning }
					: { kind: 'duplicate', clip: publicClip(result.clip) };
		} catch (err) {
			if (err instanceof IngestError) outcome = { kind: 'refused', code: err.code, message: err.message };
			else if (isHttpError(err)) outcome = { kind: 'refused', code: 'not_found', message: err.body.message };
			else {
				console.error(`Upload ${upload.id}: ingest failed`, err);
				throw tusFailure(500, 'server_error', 'The file arrived but could not be stored; the error has been logged. Try the upload again.');
			}
		}
		await rm(path, { force: true });
		const record = { id: upload.id, size: upload.size, offset: upload.size ?? 0, creation_date: upload.creation_date };
		await store.configstore.set(upload.id, new Upload({ ...record, metadata: { ...upload.metadata, outcome: JSON.stringify(outcome) } }));
		return outcome;
	})();
	finishing.set(upload.id, work);
	return work.finally(() => finishing.delete(upload.id));
}

function checkedMetadata(upload: Pick<Upload, 'metadata'>): UploadMetadata {
	const parsed = UploadMetadata.safeParse(upload.metadata ?? {});
	if (!parsed.success) throw tusFailure(400, 'invalid_metadata', parsed.error.issues[0].message);
	return parsed.data;
}

function storedOutcome(upload: Pick<Upload, 'metadata'>): UploadOutcome | null {
	const raw = upload.metadata?.outcome;
	return raw ? (JSON.parse(raw) as UploadOutcome) : null;
}

const UPLOAD_ID = /^[0-9a-f]{32}$/;

/**
 * Answers one tus request (POST creates; HEAD, PATCH and DELETE act on /api/uploads/<id>)
 * for the caller `allow` lets through. Every request on an existing upload is checked
 * against the caller's workspace and the upload's capture session.
 */
export async function handleUploadRequest(event: Pick<RequestEvent, 'request' | 'params'>, allow: () => Allowed): Promise<Response> {
	try {
		return await answerUpload(event, allow());
	} catch (err) {
		// Refused before its body was read: answered here so the connection can be closed.
		if (isHttpError(err)) return refusal(event.request, err.status, err.body.code ?? 'refused', err.body.message);
		throw err;
	}
}

async function answerUpload(event: Pick<RequestEvent, 'request' | 'params'>, allowed: Allowed): Promise<Response> {
	const { request } = event;
	const method = request.method;
	const rest = event.params.path ?? '';
	const caller: Caller = { scope: allowed.scope, userId: allowed.userId };
	const { server, store } = tusServer();

	if (method === 'POST') {
		if (rest !== '') return refusal(request, 404, 'not_found', 'Create uploads at /api/uploads.');
	} else {
		const id = rest;
		const upload = UPLOAD_ID.test(id) ? await store.configstore.get(id) : undefined;
		if (!upload || upload.metadata?.workspaceId !== allowed.scope.workspaceId) {
			return refusal(request, 404, 'not_found', 'No such upload in this workspace; start the upload again.');
		}
		allowed.scope.session(upload.metadata.sessionId ?? '');
		const outcome = storedOutcome(upload);
		if (method === 'DELETE' && (outcome || !(await exists(join(uploadsDir(), id))))) {
			await forget(id);
			return new Response(null, { status: 204, headers: { 'Tus-Resumable': '1.0.0' } });
		}
		if (method === 'HEAD') {
			// A complete upload whose finish was lost (connection cut, server restart) is finished now.
			const received = await stat(join(uploadsDir(), id)).catch(() => null);
			const complete = upload.size !== undefined && received?.size === upload.size;
			if (outcome || complete) {
				const result = outcome ?? (await finishUpload(caller, upload).catch(() => null));
				if (!result) return refusal(request, 410, 'gone', 'This upload could not be finished; start it again.');
				return new Response(null, {
					status: 200,
					headers: {
						'Tus-Resumable': '1.0.0',
						'Cache-Control': 'no-store',
						'Upload-Offset': String(upload.size ?? 0),
						'Upload-Length': String(upload.size ?? 0),
						[OUTCOME_HEADER]: Buffer.from(JSON.stringify(result)).toString('base64url')
					}
				});
			}
		}
		if (method === 'PATCH' && outcome) return refusal(request, 409, 'finished', 'This upload is already finished.');
	}

	if (!request.headers.get('tus-resumable')) {
		return refusal(request, 400, 'not_tus', 'This endpoint speaks the tus resumable-upload protocol (send "Tus-Resumable: 1.0.0"); use a tus client such as tus-js-client.');
	}
	callers.set(request, caller);
	return asJsonErrors(method, await server.handleWeb(request));
}

async function exists(path: string): Promise<boolean> {
	return stat(path).then(
		() => true,
		() => false
	);
}

async function forget(id: string): Promise<void> {
	await rm(join(uploadsDir(), id), { force: true });
	await rm(join(uploadsDir(), `${id}.json`), { force: true });
}

function refusal(request: Request, status: number, code: string, message: string): Response {
	const headers: Record<string, string> = { 'Tus-Resumable': '1.0.0', 'Content-Type': 'application/json' };
	// A chunk we decline to read would otherwise be taken for the next request on this connection.
	if (request.body && !request.bodyUsed) headers.Connection = 'close';
	return new Response(request.method === 'HEAD' ? null : JSON.stringify({ error: { code, message } }), { status, headers });
}

/** tus answers errors in plain text; the API answers { error: { code, message } }, keeping tus's headers. */
async function asJsonErrors(method: string, response: Response): Promise<Response> {
	if (response.status < 400 || response.headers.get('content-type')?.includes('application/json')) return response;
	const text = (await response.text()).trim();
	let body: unknown = null;
	try {
		body = JSON.parse(text);
	} catch {
		body = { error: { code: tusErrorCode(response.status), message: tusErrorMessage(response.status, text) } };
	}
	const headers = new Headers(response.headers);
	headers.delete('content-length');
	headers.set('Content-Type', 'application/json');
	return new Response(method === 'HEAD' ? null : JSON.stringify(body), { status: response.status, headers });
}

function tusErrorCode(status: number): string {
	return ({ 404: 'not_found', 409: 'offset_conflict', 410: 'gone', 413: 'too_large', 423: 'locked', 460: 'checksum_mismatch' } as Record<number, string>)[status] ?? (status >= 500 ? 'server_error' : 'upload_refused');
}

function tusErrorMessage(status: number, text: string): string {
	if (status === 413) {
		const limit = uploadSettings().maxSizeBytes;
		return `The file is larger than this server accepts (${(limit / GIB).toFixed(0)} GB; set UPLOAD_MAX_BYTES to change it).`;
	}
	if (status === 409) return `The upload's offset does not match what the server holds; the client should ask (HEAD) and resume. (${text})`;
	return text || `Upload request failed with status ${status}.`;
}

let sweepTimer: ReturnType<typeof setInterval> | undefined;

/** Removes partial uploads older than the expiry, and the records of finished ones after a day. */
function scheduleSweep(expiryHours: number): void {
	if (sweepTimer) return;
	const sweep = async () => {
		const { store } = tusServer();
		const names = await readdir(uploadsDir()).catch(() => [] as string[]);
		const now = Date.now();
		for (const name of names.filter((n) => n.endsWith('.json'))) {
			const id = name.slice(0, -'.json'.length);
			const upload = await store.configstore.get(id);
			const created = upload?.creation_date ? Date.parse(upload.creation_date) : now;
			const keepHours = upload && storedOutcome(upload) ? 24 : expiryHours;
			if (now - created > keepHours * 3600_000) await forget(id);
		}
	};
	sweep().catch((err) => console.error('Upload sweep failed', err));
	sweepTimer = setInterval(() => sweep().catch((err) => console.error('Upload sweep failed', err)), 3600_000);
	sweepTimer.unref();
}
