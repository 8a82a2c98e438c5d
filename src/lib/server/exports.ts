import { createHash } from 'node:crypto';
import { readFile } from 'node:fs/promises';
import { and, desc, eq, gt, isNull } from 'drizzle-orm';
import { z } from 'zod';
import { fileStem } from '$lib/sync/exporters/common';
import { clipsCsv, instantsCsv } from '$lib/sync/exporters/csv';
import { timingJson } from '$lib/sync/exporters/json';
import { timingOtio } from '$lib/sync/exporters/otio';
import { extractionScript } from '$lib/sync/exporters/script';
import { timingSummary } from '$lib/sync/exporters/summary';
import {
	buildTimingTable,
	frameTimingOfStored,
	TimingTableError,
	type InstantChoice,
	type TableClipInput,
	type TimingTable
} from '$lib/sync/timing-table';
import { recordActivity } from './activity';
import { clipsOfSession } from './capture-sessions';
import { db } from './db';
import { exportRecords, users, type CaptureSession, type Clip } from './db/schema';
import type { Allowed } from './guard';
import { newId } from './ids';
import { Refusal } from './refusal';
import type { WorkspaceScope } from './scope';

export const EXPORT_FORMATS = ['csv', 'json', 'otio', 'script', 'summary'] as const;
export type ExportFormat = (typeof EXPORT_FORMATS)[number];

/** What a request asks of the table (page and API alike); unset fields take the defaults. */
export interface TableRequest {
	instants: InstantChoice | null;
	/** Clip ids in column order; null for every exportable camera. */
	cameras: string[] | null;
	toleranceMs: number | null;
}

const numberParam = (name: string, check: z.ZodNumber) =>
	z
		.string()
		.trim()
		.transform((text, ctx) => {
			const value = Number(text);
			if (text === '' || !Number.isFinite(value)) {
				ctx.addIssue({ code: 'custom', message: `${name} must be a number.` });
				return z.NEVER;
			}
			return value;
		})
		.pipe(check)
		.optional();

const QueryFields = z.object({
	every: numberParam('every', z.number().min(0.001, 'every must be at least 0.001 s.').max(3600, 'every must be at most 3600 s.')),
	count: numberParam('count', z.number().int('count must be a whole number.').min(1, 'count must be at least 1.').max(250_000, 'count must be at most 250000.')),
	frameOf: z.string().trim().min(1).optional(),
	cameras: z.string().trim().optional(),
	tolerance: numberParam('tolerance', z.number().positive('tolerance must be above 0 ms.').max(10_000, 'tolerance must be at most 10000 ms.')),
	format: z.enum(EXPORT_FORMATS, { message: `format must be one of ${EXPORT_FORMATS.join(', ')}.` }).optional(),
	table: z.enum(['instants', 'clips'], { message: 'table must be instants or clips.' }).optional(),
	unapproved: z.literal('ok', { message: 'unapproved, when given, must be "ok".' }).optional()
});

function queryObject(params: URLSearchParams): Record<string, string> {
	const fields: Record<string, string> = {};
	for (const key of ['every', 'count', 'frameOf', 'tolerance', 'format', 'table', 'unapproved']) {
		const value = params.get(key);
		if (value !== null && value !== '') fields[key] = value;
	}
	// cameras=a,b (the API) or cameras=a&cameras=b (checkboxes of a form).
	const cameras = params.getAll('cameras').join(',');
	if (cameras) fields.cameras = cameras;
	return fields;
}

/** The canonical query of a resolved request: what the page links to and what the API accepts. */
export function canonicalQuery(resolved: TimingTableResult['resolved'], allCameras: boolean): URLSearchParams {
	const query = new URLSearchParams();
	const i = resolved.instants;
	if (i.kind === 'every') query.set('every', String(i.everySeconds));
	else if (i.kind === 'count') query.set('count', String(i.count));
	else query.set('frameOf', i.clipId);
	if (!allCameras) query.set('cameras', resolved.cameras.join(','));
	if (resolved.toleranceMs !== null) query.set('tolerance', String(resolved.toleranceMs));
	return query;
}

/** Reads the query of the page or the API; refuses contradictions in words. */
export function parseTableQuery(params: URLSearchParams) {
	const parsed = QueryFields.safeParse(queryObject(params));
	if (!parsed.success) throw new Refusal('invalid_input', parsed.error.issues[0].message, 400);
	const q = parsed.data;
	const chosen = [q.every !== undefined, q.count !== undefined, q.frameOf !== undefined].filter(Boolean).length;
	if (chosen > 1) throw new Refusal('invalid_input', 'Give one of every, count or frameOf, not several.', 400);
	const instants: InstantChoice | null =
		q.every !== undefined
			? { kind: 'every', everySeconds: q.every }
			: q.count !== undefined
				? { kind: 'count', count: q.count }
				: q.frameOf !== undefined
					? { kind: 'frames', clipId: q.frameOf }
					: null;
	const cameras = q.cameras ? [...new Set(q.cameras.split(',').map((c) => c.trim()).filter(Boolean))] : null;
	const request: TableRequest = { instants, cameras, toleranceMs: q.tolerance ?? null };
	return { request, format: q.format ?? null, csvTable: q.table ?? 'instants', acknowledgedUnapproved: q.unapproved === 'ok' };
}

/** About 2 instants a second, kept within 50–150 images (REFERENCES.md, capture practice). */
export function defaultInstantCount(spanSeconds: number): number {
	return Math.min(150, Math.max(50, Math.round(spanSeconds * 2)));
}

export interface CameraChoice {
	id: string;
	label: string;
	position: Clip['cameraPosition'];
	fileName: string;
	/** Why it cannot be in the table, or null when it can. */
	unavailable: string | null;
}

function unavailableReason(clip: Clip): string | null {
	if (!clip.included) return 'left out of the alignment';
	if (clip.state !== 'ready') return clip.state === 'probing' ? 'still being probed' : 'could not be read';
	if (!clip.matched || clip.offsetSeconds === null || clip.driftPpm === null) return 'not matched by sound';
	if (!clip.frameRateNum && !clip.variableFrameRate) return 'no video frames';
	return null;
}

async function tableClipOf(clip: Clip, referenceClipId: string | null): Promise<TableClipInput | null> {
	let frameTimes: number[] | null = null;
	if (clip.variableFrameRate && clip.frameTimesPath) {
		frameTimes = JSON.parse(await readFile(clip.frameTimesPath, 'utf8')) as number[];
	}
	const timing = frameTimingOfStored(clip, frameTimes);
	if (!timing) return null;
	return {
		id: clip.id,
		label: clip.cameraLabel,
		position: clip.cameraPosition,
		fileName: clip.originalName,
		isReference: clip.id === referenceClipId,
		placement: { offsetSeconds: clip.offsetSeconds!, driftPpm: clip.driftPpm! },
		frameRate: timing.frameRate,
		variableFrameRate: clip.variableFrameRate,
		frames: timing.frames,
		embeddedTimecode: clip.embeddedTimecode
	};
}

export interface TimingTableResult {
	session: CaptureSession;
	cameras: CameraChoice[];
	inputs: TableClipInput[];
	table: TimingTable;
	/** The request with its defaults filled in: what the table was built from. */
	resolved: { instants: InstantChoice; cameras: string[]; toleranceMs: number | null };
}

/** Builds a session's timing table for a request, refusing (in words) what cannot be built. */
export async function timingTableOf(scope: WorkspaceScope, sessionId: string, request: TableRequest): Promise<TimingTableResult> {
	const session = scope.session(sessionId);
	const clips = clipsOfSession(scope, sessionId);
	const cameras: CameraChoice[] = clips.map((c) => ({ id: c.id, label: c.cameraLabel, position: c.cameraPosition, fileName: c.originalName, unavailable: unavailableReason(c) }));
	const start = session.usableStartSeconds;
	const end = session.usableEndSeconds;
	if (start === null || end === null || !(end > start)) {
		throw new Refusal('no_usable_span', 'This capture session has no usable span yet: align it, then mark the span on the workbench.', 409);
	}
	const available = cameras.filter((c) => c.unavailable === null).map((c) => c.id);
	const chosen = request.cameras ?? available;
	for (const id of chosen) {
		const camera = cameras.find((c) => c.id === id);
		if (!camera) throw new Refusal('unknown_camera', `No clip ${id} in this capture session.`, 400);
		if (camera.unavailable) throw new Refusal('camera_unavailable', `${camera.label} cannot be exported: ${camera.unavailable}.`, 409);
	}
	if (chosen.length === 0) throw new Refusal('no_cameras', 'No camera of this session is aligned yet: there is nothing to export.', 409);
	const inputs: TableClipInput[] = [];
	for (const id of chosen) {
		const input = await tableClipOf(clips.find((c) => c.id === id)!, session.referenceClipId);
		if (!input) throw new Refusal('camera_unavailable', `${cameras.find((c) => c.id === id)!.label} has no frame timing.`, 409);
		inputs.push(input);
	}
	const instants = request.instants ?? { kind: 'count', count: defaultInstantCount(end - start) };
	if (instants.kind === 'frames' && !chosen.includes(instants.clipId)) {
		throw new Refusal('invalid_input', '"Every frame of" must name one of the exported cameras.', 400);
	}
	try {
		const table = buildTimingTable({
			session: { id: session.id, name: session.name, site: session.site, captureDate: session.captureDate, status: session.status, revision: session.version },
			usableSpan: { startSeconds: start, endSeconds: end },
			clips: inputs,
			instants,
			toleranceMs: request.toleranceMs ?? undefined
		});
		return { session, cameras, inputs, table, resolved: { instants, cameras: chosen, toleranceMs: request.toleranceMs } };
	} catch (e) {
		if (e instanceof TimingTableError) throw new Refusal(e.code, e.message, 400);
		throw e;
	}
}

export interface RenderedExport {
	body: string;
	contentType: string;
	fileName: string;
}

export function renderExport(table: TimingTable, inputs: TableClipInput[], format: ExportFormat, csvTable: 'instants' | 'clips' = 'instants'): RenderedExport {
	const stem = fileStem(table);
	switch (format) {
		case 'csv':
			return csvTable === 'clips'
				? { body: clipsCsv(table), contentType: 'text/csv; charset=utf-8; header=present', fileName: `${stem}-cameras.csv` }
				: { body: instantsCsv(table), contentType: 'text/csv; charset=utf-8; header=present', fileName: `${stem}-timing.csv` };
		case 'json':
			return { body: timingJson(table), contentType: 'application/json; charset=utf-8', fileName: `${stem}-timing.json` };
		case 'otio':
			return { body: timingOtio(table, inputs), contentType: 'application/json; charset=utf-8', fileName: `${stem}.otio` };
		case 'script':
			return { body: extractionScript(table), contentType: 'text/x-shellscript; charset=utf-8', fileName: `${stem}-extract-frames.sh` };
		case 'summary':
			return { body: timingSummary(table), contentType: 'text/html; charset=utf-8', fileName: `${stem}-summary.html` };
	}
}

const FORMAT_LABELS: Record<ExportFormat, string> = {
	csv: 'CSV',
	json: 'JSON',
	otio: 'OpenTimelineIO',
	script: 'frame-extraction script',
	summary: 'printable summary'
};

/**
 * Exports a session's timing table in one format and records who took it, from which revision,
 * with what parameters and the file's sha256. The file holds no clock time, so the same
 * revision and parameters always give the same bytes.
 */
export async function createExport(allowed: Allowed, sessionId: string, params: URLSearchParams) {
	const query = parseTableQuery(params);
	const format = query.format ?? 'csv';
	const result = await timingTableOf(allowed.scope, sessionId, query.request);
	const { session, table, inputs, resolved } = result;
	if (session.status !== 'approved' && !query.acknowledgedUnapproved) {
		throw new Refusal(
			'session_not_approved',
			`This capture session is not approved (it is ${session.status.replace('_', ' ')}). Add unapproved=ok to export it anyway; the files will say UNAPPROVED in their header.`,
			409
		);
	}
	const file = renderExport(table, inputs, format, query.csvTable);
	const sha256 = createHash('sha256').update(file.body).digest('hex');
	const byteSize = Buffer.byteLength(file.body);
	const paramsJson = JSON.stringify({
		format,
		...(format === 'csv' ? { table: query.csvTable } : {}),
		instants: resolved.instants,
		cameras: resolved.cameras,
		toleranceMs: resolved.toleranceMs,
		unapproved: session.status !== 'approved'
	});
	const id = newId();
	db.transaction(() => {
		// A script polling the same table, or a person downloading it again, is one event in the
		// feed; every download still has its own export record (and its line in the history).
		const sameExportLately = db
			.select({ id: exportRecords.id })
			.from(exportRecords)
			.where(
				and(
					eq(exportRecords.sessionId, session.id),
					eq(exportRecords.sessionVersion, session.version),
					eq(exportRecords.format, format),
					allowed.userId === null ? isNull(exportRecords.userId) : eq(exportRecords.userId, allowed.userId),
					allowed.tokenId === null ? isNull(exportRecords.apiTokenId) : eq(exportRecords.apiTokenId, allowed.tokenId),
					gt(exportRecords.createdAt, new Date(Date.now() - REPEAT_EXPORT_QUIET_MS))
				)
			)
			.get();
		db.insert(exportRecords)
			.values({
				id,
				workspaceId: allowed.scope.workspaceId,
				sessionId: session.id,
				sessionVersion: session.version,
				format,
				paramsJson,
				userId: allowed.userId,
				apiTokenId: allowed.tokenId,
				sha256,
				byteSize
			})
			.run();
		if (!sameExportLately) recordActivity(allowed.scope, {
			sessionId: session.id,
			userId: allowed.userId,
			kind: 'exported',
			message: `exported the timing table as ${FORMAT_LABELS[format]} (${table.rows.length} instants, revision ${session.version}${session.status === 'approved' ? '' : ', unapproved'})${allowed.tokenId ? ' by API token' : ''}`
		});
	});
	return { ...file, id, sha256, byteSize };
}

/** Within this long, the same person's export of the same revision and format adds no activity entry. */
export const REPEAT_EXPORT_QUIET_MS = 10 * 60 * 1000;

export function exportsOfSession(scope: WorkspaceScope, sessionId: string, limit = 8) {
	return db
		.select({
			id: exportRecords.id,
			format: exportRecords.format,
			sessionVersion: exportRecords.sessionVersion,
			paramsJson: exportRecords.paramsJson,
			sha256: exportRecords.sha256,
			byteSize: exportRecords.byteSize,
			createdAt: exportRecords.createdAt,
			viaToken: exportRecords.apiTokenId,
			who: users.displayName
		})
		.from(exportRecords)
		.leftJoin(users, eq(users.id, exportRecords.userId))
		.where(scope.where(exportRecords, eq(exportRecords.sessionId, sessionId)))
		.orderBy(desc(exportRecords.createdAt))
		.limit(limit)
		.all()
		.map(({ viaToken, ...row }) => ({ ...row, viaToken: viaToken !== null }));
}
