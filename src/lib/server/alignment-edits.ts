import { json } from '@sveltejs/kit';
import { desc, eq, gt } from 'drizzle-orm';
import { z } from 'zod';
import { commonSpan, reexpressRelativeTo, trimProblem, usableSpanProblem, type Span } from '$lib/sync/nudge';
import { frameSpanSeconds } from '$lib/sync/frames';
import { frameTimingOfStored } from '$lib/sync/timing-table';
import { recordActivity } from './activity';
import { clipsOfSession } from './capture-sessions';
import { publicClip } from './clips';
import { db } from './db';
import { captureSessions, clips, revisions, users, type CaptureSession, type Clip, type Revision } from './db/schema';
import { newId } from './ids';
import { apiRefusal, parseInput, Refusal } from './refusal';
import type { WorkspaceScope } from './scope';

/*
 * Every change an editor makes on the workbench: offset, drift, reference, lock, usable
 * span, trims, and reverting to an earlier revision. Each names the session version it
 * was based on; a stale one is refused with the change that overtook it. The change, its
 * revision (who, what, from → to, why) and the new version are written in one transaction.
 */

// ─── What a revision records ────────────────────────────────────────────────

/** The part of one clip's placement a change touched. */
export interface ClipPatch {
	clipId: string;
	offsetSeconds?: number | null;
	driftPpm?: number | null;
	syncMethod?: Clip['syncMethod'];
	matched?: boolean | null;
	locked?: boolean;
	trimStartSeconds?: number | null;
	trimEndSeconds?: number | null;
}

/** The part of a session's alignment a change touched: stored as a revision's from/to. */
export interface AlignmentPatch {
	referenceClipId?: string | null;
	usableSpan?: { startSeconds: number | null; endSeconds: number | null };
	clips?: ClipPatch[];
	/** On a revert: the version whose state was restored. */
	revertedToVersion?: number;
}

function parsePatch(json: string | null): AlignmentPatch {
	if (!json) return {};
	const value = JSON.parse(json) as AlignmentPatch | ClipPatch[];
	// The alignment job records its from/to as a bare list of clip placements.
	return Array.isArray(value) ? { clips: value } : value;
}

// ─── Input ──────────────────────────────────────────────────────────────────

const clipId = z.string().min(1, 'Name the clip (clipId).');
const reason = z.string().trim().max(500, 'Keep the reason under 500 characters.').optional();
const seconds = (what: string) => z.number(`Give ${what} as a number of seconds.`);

export const AlignmentEdit = z.discriminatedUnion(
	'kind',
	[
		z.object({ kind: z.literal('offset'), clipId, offsetSeconds: seconds('the offset'), reason }),
		z.object({
			kind: z.literal('drift'),
			clipId,
			driftPpm: z.number('Give the drift in ppm.').min(-5000, 'A drift beyond ±5000 ppm is not a clock error.').max(5000, 'A drift beyond ±5000 ppm is not a clock error.'),
			reason
		}),
		z.object({ kind: z.literal('reference'), clipId, reason }),
		z.object({ kind: z.literal('lock'), clipId, locked: z.boolean('Say locked: true or false.'), reason }),
		z.object({ kind: z.literal('usable_span'), startSeconds: seconds('the span start'), endSeconds: seconds('the span end'), reason }),
		z.object({
			kind: z.literal('trim'),
			clipId,
			trimStartSeconds: seconds('the trim start').nullable(),
			trimEndSeconds: seconds('the trim end').nullable(),
			reason
		})
	],
	'Say which change this is: kind offset, drift, reference, lock, usable_span or trim.'
);
export type AlignmentEditInput = z.infer<typeof AlignmentEdit>;

const version = z.number('Send the session version your change is based on.').int().positive();
export const AlignmentEditRequest = z.object({ version, edit: AlignmentEdit });
export const RevertRequest = z.object({ version, reason });

// ─── Reading ────────────────────────────────────────────────────────────────

export interface RevisionView {
	id: string;
	sessionVersion: number;
	kind: Revision['kind'];
	clipId: string | null;
	who: string;
	summary: string;
	reason: string;
	createdAt: number;
	/** Whether the state after this revision can be restored (status changes are not states). */
	revertible: boolean;
}

type Labels = Map<string, string>;

const seconds6 = (s: number | null | undefined) => (s === null || s === undefined ? '—' : `${s >= 0 ? '+' : '−'}${Math.abs(s).toFixed(6)} s`);
const ppm = (d: number | null | undefined) => (d === null || d === undefined ? '—' : `${d >= 0 ? '+' : '−'}${Math.abs(d).toFixed(2)} ppm`);
const span = (s: AlignmentPatch['usableSpan']) =>
	!s || s.startSeconds === null || s.endSeconds === null ? 'none' : `${s.startSeconds.toFixed(3)}–${s.endSeconds.toFixed(3)} s`;
const trim = (c: ClipPatch | undefined) =>
	!c || (c.trimStartSeconds == null && c.trimEndSeconds == null) ? 'whole clip' : `${(c.trimStartSeconds ?? 0).toFixed(3)}–${c.trimEndSeconds == null ? 'end' : c.trimEndSeconds.toFixed(3) + ' s'}`;

/** One revision in words: what changed, from what to what. */
export function describeRevision(revision: Pick<Revision, 'kind' | 'clipId' | 'fromJson' | 'toJson'>, labels: Labels): string {
	const from = revision.kind === 'status' ? {} : parsePatch(revision.fromJson);
	const to = revision.kind === 'status' ? {} : parsePatch(revision.toJson);
	const label = (id: string | null | undefined) => (id ? (labels.get(id) ?? 'a removed clip') : 'none');
	const clipFrom = from.clips?.find((c) => c.clipId === revision.clipId);
	const clipTo = to.clips?.find((c) => c.clipId === revision.clipId);
	switch (revision.kind) {
		case 'offset':
			return `changed the offset of ${label(revision.clipId)} from ${seconds6(clipFrom?.offsetSeconds)} to ${seconds6(clipTo?.offsetSeconds)}`;
		case 'drift':
			return `changed the drift of ${label(revision.clipId)} from ${ppm(clipFrom?.driftPpm)} to ${ppm(clipTo?.driftPpm)}`;
		case 'reference':
			return `changed the reference clip from ${label(from.referenceClipId)} to ${label(to.referenceClipId)} (offsets re-expressed)`;
		case 'usable_span':
			return `changed the usable span from ${span(from.usableSpan)} to ${span(to.usableSpan)}`;
		case 'trim':
			return `changed the trim of ${label(revision.clipId)} from ${trim(clipFrom)} to ${trim(clipTo)}`;
		case 'clip':
			return `${clipTo?.locked ? 'locked' : 'unlocked'} ${label(revision.clipId)}`;
		case 'revert':
			return `reverted to version ${to.revertedToVersion ?? '?'}`;
		case 'alignment':
			return `aligned by sound (${to.clips?.length ?? 0} clips placed)`;
		case 'status': {
			const f = revision.fromJson ? (JSON.parse(revision.fromJson) as { status?: string }) : {};
			const t = revision.toJson ? (JSON.parse(revision.toJson) as { status?: string }) : {};
			return `changed the status from ${f.status ?? '?'} to ${t.status ?? '?'}`;
		}
	}
}

function labelsOf(sessionClips: Clip[]): Labels {
	return new Map(sessionClips.map((c) => [c.id, c.cameraLabel]));
}

function revisionRows(scope: WorkspaceScope, sessionId: string, afterVersion = 0) {
	return db
		.select({ revision: revisions, who: users.displayName })
		.from(revisions)
		.leftJoin(users, eq(users.id, revisions.userId))
		.where(scope.where(revisions, eq(revisions.sessionId, sessionId), gt(revisions.sessionVersion, afterVersion)))
		.orderBy(desc(revisions.sessionVersion), desc(revisions.createdAt))
		.all();
}

export function revisionsOfSession(scope: WorkspaceScope, sessionId: string, afterVersion = 0): RevisionView[] {
	scope.session(sessionId);
	const labels = labelsOf(clipsOfSession(scope, sessionId));
	return revisionRows(scope, sessionId, afterVersion).map(({ revision, who }) => ({
		id: revision.id,
		sessionVersion: revision.sessionVersion,
		kind: revision.kind,
		clipId: revision.clipId,
		who: who ?? (revision.kind === 'alignment' ? 'Lockstep' : 'an API token'),
		summary: describeRevision(revision, labels),
		reason: revision.reason,
		createdAt: revision.createdAt.getTime(),
		revertible: revision.kind !== 'status'
	}));
}

function includedPlaced(sessionClips: Clip[]) {
	return sessionClips
		.filter((c) => c.included && c.offsetSeconds !== null && c.durationSeconds !== null)
		.map((c) => ({
			offsetSeconds: c.offsetSeconds!,
			driftPpm: c.driftPpm ?? 0,
			durationSeconds: c.durationSeconds!,
			trimStartSeconds: c.trimStartSeconds,
			trimEndSeconds: c.trimEndSeconds,
			frameSpan: constantFrameSpan(c)
		}));
}

/**
 * Where a clip with constant frame timing has frames, in clip time. A clip with variable timing
 * keeps its frame times in a file; its span is left to its media (the engine's common span,
 * which the usable span starts from, does use its frames).
 */
function constantFrameSpan(clip: Clip): { start: number; end: number } | null {
	if (clip.variableFrameRate || !clip.videoCodec) return null;
	const timing = frameTimingOfStored(clip, null);
	return timing ? frameSpanSeconds(timing.frames) : null;
}

/** Where every included, placed clip has media (trims honoured), in session time. */
export function commonSpanOf(sessionClips: Clip[]): Span | null {
	return commonSpan(includedPlaced(sessionClips));
}

/** Everything the workbench shows: the session, its clips as the browser may see them, the span and the history. */
export function workbenchOf(scope: WorkspaceScope, sessionId: string) {
	const session = scope.session(sessionId);
	const sessionClips = clipsOfSession(scope, sessionId);
	return {
		session,
		clips: sessionClips.map(publicClip),
		commonSpan: commonSpanOf(sessionClips),
		revisions: revisionsOfSession(scope, sessionId)
	};
}
export type Workbench = ReturnType<typeof workbenchOf>;

// ─── Conflicts ──────────────────────────────────────────────────────────────

/** A change based on an old version: refused, carrying what happened since so nothing is overwritten unseen. */
export class EditConflict extends Refusal {
	constructor(
		readonly currentVersion: number,
		readonly changes: RevisionView[]
	) {
		super('version_conflict', conflictMessage(currentVersion, changes), 409);
	}
}

function conflictMessage(currentVersion: number, changes: RevisionView[]): string {
	const tail = `Your change was not saved; it is kept so you can look at theirs and apply yours on top.`;
	const latest = changes[0];
	if (!latest) return `This capture session was changed elsewhere (now version ${currentVersion}). ${tail}`;
	const time = new Date(latest.createdAt).toISOString().slice(11, 19);
	const more = changes.length > 1 ? ` (and ${changes.length - 1} more change${changes.length > 2 ? 's' : ''})` : '';
	return `${latest.who} ${latest.summary} at ${time} UTC${more}; the session is now at version ${currentVersion}. ${tail}`;
}

// ─── Writing ────────────────────────────────────────────────────────────────

function snapshotClip(c: Clip): ClipPatch {
	return {
		clipId: c.id,
		offsetSeconds: c.offsetSeconds,
		driftPpm: c.driftPpm,
		syncMethod: c.syncMethod,
		matched: c.matched,
		locked: c.locked,
		trimStartSeconds: c.trimStartSeconds,
		trimEndSeconds: c.trimEndSeconds
	};
}

function snapshotOf(session: CaptureSession, sessionClips: Clip[]): AlignmentPatch {
	return {
		referenceClipId: session.referenceClipId,
		usableSpan: { startSeconds: session.usableStartSeconds, endSeconds: session.usableEndSeconds },
		clips: sessionClips.map(snapshotClip)
	};
}

function pick<T extends object>(value: T, keys: (keyof T)[]): Partial<T> {
	const out: Partial<T> = {};
	for (const key of keys) if (key in value) out[key] = value[key];
	return out;
}

/** Writes a patch onto the session and its clips (only the fields it names). */
function writePatch(scope: WorkspaceScope, sessionId: string, patch: AlignmentPatch): void {
	const sessionSet: Partial<CaptureSession> = {};
	if ('referenceClipId' in patch) sessionSet.referenceClipId = patch.referenceClipId ?? null;
	if (patch.usableSpan) {
		sessionSet.usableStartSeconds = patch.usableSpan.startSeconds;
		sessionSet.usableEndSeconds = patch.usableSpan.endSeconds;
	}
	if (Object.keys(sessionSet).length) db.update(captureSessions).set(sessionSet).where(scope.where(captureSessions, eq(captureSessions.id, sessionId))).run();
	for (const c of patch.clips ?? []) {
		const set = pick(c, ['offsetSeconds', 'driftPpm', 'syncMethod', 'matched', 'locked', 'trimStartSeconds', 'trimEndSeconds']);
		if (Object.keys(set).length === 0) continue;
		db.update(clips)
			.set(set)
			.where(scope.where(clips, eq(clips.id, c.clipId), eq(clips.sessionId, sessionId)))
			.run();
	}
}

interface Change {
	kind: Revision['kind'];
	clipId: string | null;
	from: AlignmentPatch;
	to: AlignmentPatch;
	/** Whether the change moves offsets or the span (an approved or in-review session goes back to aligned). */
	movesTiming: boolean;
	activity: string;
}

export interface EditOutcome extends Workbench {
	revision: RevisionView;
}

/**
 * Runs one change in a transaction: version check, the change, its revision, the new
 * version, and the status going back to aligned where the change moves the timing.
 */
function commit(
	scope: WorkspaceScope,
	sessionId: string,
	userId: string | null,
	baseVersion: number,
	reasonText: string | undefined,
	plan: (session: CaptureSession, sessionClips: Clip[]) => Change
): EditOutcome {
	const revisionId = newId();
	db.transaction(() => {
		const session = scope.session(sessionId);
		if (session.version !== baseVersion) throw new EditConflict(session.version, revisionsOfSession(scope, sessionId, baseVersion));
		const sessionClips = clipsOfSession(scope, sessionId);
		const change = plan(session, sessionClips);
		writePatch(scope, sessionId, change.to);
		const nextVersion = session.version + 1;
		const updated = db
			.update(captureSessions)
			.set({ version: nextVersion, updatedAt: new Date() })
			.where(scope.where(captureSessions, eq(captureSessions.id, sessionId), eq(captureSessions.version, baseVersion)))
			.run();
		if (updated.changes === 0) throw new EditConflict(scope.session(sessionId).version, revisionsOfSession(scope, sessionId, baseVersion));
		db.insert(revisions)
			.values({
				id: revisionId,
				workspaceId: scope.workspaceId,
				sessionId,
				sessionVersion: nextVersion,
				userId,
				kind: change.kind,
				clipId: change.clipId,
				fromJson: JSON.stringify(change.from),
				toJson: JSON.stringify(change.to),
				reason: reasonText ?? ''
			})
			.run();
		recordActivity(scope, { sessionId, userId, kind: `alignment_${change.kind}`, message: change.activity });
		if (change.movesTiming && (session.status === 'approved' || session.status === 'in_review')) {
			db.update(captureSessions).set({ status: 'aligned' }).where(scope.where(captureSessions, eq(captureSessions.id, sessionId))).run();
			db.insert(revisions)
				.values({
					id: newId(),
					workspaceId: scope.workspaceId,
					sessionId,
					sessionVersion: nextVersion,
					userId,
					kind: 'status',
					fromJson: JSON.stringify({ status: session.status }),
					toJson: JSON.stringify({ status: 'aligned' }),
					reason: 'The timing changed, so the review has to be done again.'
				})
				.run();
			recordActivity(scope, { sessionId, userId, kind: 'status_changed', message: `moved the session back to aligned: its timing changed after ${session.status === 'approved' ? 'approval' : 'it was sent for review'}` });
		}
	});
	const workbench = workbenchOf(scope, sessionId);
	return { ...workbench, revision: workbench.revisions.find((r) => r.id === revisionId)! };
}

function clipIn(sessionClips: Clip[], id: string): Clip {
	const clip = sessionClips.find((c) => c.id === id);
	if (!clip) throw new Refusal('not_found', 'That clip is not part of this capture session.', 404);
	return clip;
}

function unlocked(clip: Clip): Clip {
	if (clip.locked) throw new Refusal('clip_locked', `${clip.cameraLabel} is locked; unlock its lane before moving it.`, 409);
	return clip;
}

function refuseIf(problem: string | null): void {
	if (problem) throw new Refusal('invalid_input', problem, 400);
}

function planEdit(edit: AlignmentEditInput, session: CaptureSession, sessionClips: Clip[]): Change {
	switch (edit.kind) {
		case 'offset': {
			const clip = unlocked(clipIn(sessionClips, edit.clipId));
			if (clip.id === session.referenceClipId && edit.offsetSeconds !== 0) {
				throw new Refusal('reference_fixed', `${clip.cameraLabel} is the reference: its offset is 0 by definition. Choose another reference first.`, 409);
			}
			return {
				kind: 'offset',
				clipId: clip.id,
				from: { clips: [{ clipId: clip.id, offsetSeconds: clip.offsetSeconds, syncMethod: clip.syncMethod }] },
				to: { clips: [{ clipId: clip.id, offsetSeconds: edit.offsetSeconds, syncMethod: 'manual' }] },
				movesTiming: true,
				activity: `set the offset of ${clip.cameraLabel} to ${seconds6(edit.offsetSeconds)}`
			};
		}
		case 'drift': {
			const clip = unlocked(clipIn(sessionClips, edit.clipId));
			if (clip.id === session.referenceClipId && edit.driftPpm !== 0) {
				throw new Refusal('reference_fixed', `${clip.cameraLabel} is the reference: its drift is 0 by definition. Choose another reference first.`, 409);
			}
			return {
				kind: 'drift',
				clipId: clip.id,
				from: { clips: [{ clipId: clip.id, driftPpm: clip.driftPpm, syncMethod: clip.syncMethod }] },
				to: { clips: [{ clipId: clip.id, driftPpm: edit.driftPpm, syncMethod: 'manual' }] },
				movesTiming: true,
				activity: `set the drift of ${clip.cameraLabel} to ${ppm(edit.driftPpm)}`
			};
		}
		case 'reference': {
			const clip = clipIn(sessionClips, edit.clipId);
			if (clip.id === session.referenceClipId) throw new Refusal('no_change', `${clip.cameraLabel} is already the reference.`, 400);
			if (clip.offsetSeconds === null) throw new Refusal('not_placed', `${clip.cameraLabel} has no offset yet; place it on the timeline before making it the reference.`, 409);
			const reference = { offsetSeconds: clip.offsetSeconds, driftPpm: clip.driftPpm ?? 0 };
			const placed = sessionClips.filter((c) => c.offsetSeconds !== null);
			const moved = reexpressRelativeTo(
				placed.map((c) => ({ clipId: c.id, offsetSeconds: c.offsetSeconds!, driftPpm: c.driftPpm ?? 0 })),
				clip.id
			);
			const onNewTimeline = (s: number | null) => (s === null ? null : (s - reference.offsetSeconds) / (1 + reference.driftPpm * 1e-6));
			return {
				kind: 'reference',
				clipId: clip.id,
				from: {
					referenceClipId: session.referenceClipId,
					usableSpan: { startSeconds: session.usableStartSeconds, endSeconds: session.usableEndSeconds },
					clips: placed.map((c) => ({ clipId: c.id, offsetSeconds: c.offsetSeconds, driftPpm: c.driftPpm }))
				},
				to: {
					referenceClipId: clip.id,
					usableSpan: { startSeconds: onNewTimeline(session.usableStartSeconds), endSeconds: onNewTimeline(session.usableEndSeconds) },
					clips: moved.map((p) => ({ clipId: p.clipId, offsetSeconds: p.offsetSeconds, driftPpm: p.driftPpm }))
				},
				movesTiming: true,
				activity: `made ${clip.cameraLabel} the reference clip`
			};
		}
		case 'lock': {
			const clip = clipIn(sessionClips, edit.clipId);
			if (clip.locked === edit.locked) throw new Refusal('no_change', `${clip.cameraLabel} is already ${edit.locked ? 'locked' : 'unlocked'}.`, 400);
			return {
				kind: 'clip',
				clipId: clip.id,
				from: { clips: [{ clipId: clip.id, locked: clip.locked }] },
				to: { clips: [{ clipId: clip.id, locked: edit.locked }] },
				movesTiming: false,
				activity: `${edit.locked ? 'locked' : 'unlocked'} the lane of ${clip.cameraLabel}`
			};
		}
		case 'usable_span': {
			const wanted = { startSeconds: edit.startSeconds, endSeconds: edit.endSeconds };
			refuseIf(usableSpanProblem(wanted, commonSpanOf(sessionClips)));
			return {
				kind: 'usable_span',
				clipId: null,
				from: { usableSpan: { startSeconds: session.usableStartSeconds, endSeconds: session.usableEndSeconds } },
				to: { usableSpan: wanted },
				movesTiming: true,
				activity: `marked the usable span ${span(wanted)}`
			};
		}
		case 'trim': {
			const clip = clipIn(sessionClips, edit.clipId);
			if (clip.durationSeconds === null) throw new Refusal('not_probed', `${clip.cameraLabel} has not been probed yet; its length is unknown.`, 409);
			refuseIf(trimProblem(edit, clip.durationSeconds));
			const to = { clipId: clip.id, trimStartSeconds: edit.trimStartSeconds, trimEndSeconds: edit.trimEndSeconds };
			return {
				kind: 'trim',
				clipId: clip.id,
				from: { clips: [{ clipId: clip.id, trimStartSeconds: clip.trimStartSeconds, trimEndSeconds: clip.trimEndSeconds }] },
				to: { clips: [to] },
				movesTiming: true,
				activity: `trimmed ${clip.cameraLabel} to ${trim(to)}`
			};
		}
	}
}

/** One workbench change (see AlignmentEdit), based on `version`. */
export function applyAlignmentEdit(scope: WorkspaceScope, sessionId: string, userId: string | null, input: unknown): EditOutcome {
	const { version: baseVersion, edit } = parseInput(AlignmentEditRequest, input);
	return commit(scope, sessionId, userId, baseVersion, edit.reason, (session, sessionClips) => planEdit(edit, session, sessionClips));
}

/** The state after one revision, reached by undoing every later revision from the current state. */
function stateAfter(scope: WorkspaceScope, sessionId: string, target: Revision, current: AlignmentPatch): AlignmentPatch {
	const later = db
		.select()
		.from(revisions)
		.where(scope.where(revisions, eq(revisions.sessionId, sessionId), gt(revisions.sessionVersion, target.sessionVersion)))
		.orderBy(desc(revisions.sessionVersion), desc(revisions.createdAt))
		.all()
		.filter((r) => r.kind !== 'status');
	const state = structuredClone(current);
	for (const revision of later) {
		const before = parsePatch(revision.fromJson);
		if ('referenceClipId' in before) state.referenceClipId = before.referenceClipId;
		if (before.usableSpan) state.usableSpan = { ...before.usableSpan };
		for (const c of before.clips ?? []) {
			const entry = state.clips?.find((s) => s.clipId === c.clipId);
			if (entry) Object.assign(entry, pick(c, ['offsetSeconds', 'driftPpm', 'syncMethod', 'matched', 'locked', 'trimStartSeconds', 'trimEndSeconds']));
		}
	}
	return state;
}

/** The fields of `target` that differ from `current`, as a from/to pair. */
function difference(current: AlignmentPatch, target: AlignmentPatch): { from: AlignmentPatch; to: AlignmentPatch } {
	const from: AlignmentPatch = { clips: [] };
	const to: AlignmentPatch = { clips: [] };
	if (current.referenceClipId !== target.referenceClipId) {
		from.referenceClipId = current.referenceClipId;
		to.referenceClipId = target.referenceClipId;
	}
	const a = current.usableSpan;
	const b = target.usableSpan;
	if (a?.startSeconds !== b?.startSeconds || a?.endSeconds !== b?.endSeconds) {
		from.usableSpan = a;
		to.usableSpan = b;
	}
	for (const now of current.clips ?? []) {
		const then = target.clips?.find((c) => c.clipId === now.clipId);
		if (!then) continue;
		const keys = (['offsetSeconds', 'driftPpm', 'syncMethod', 'matched', 'locked', 'trimStartSeconds', 'trimEndSeconds'] as const).filter((k) => now[k] !== then[k]);
		if (keys.length === 0) continue;
		from.clips!.push({ clipId: now.clipId, ...pick(now, [...keys]) });
		to.clips!.push({ clipId: now.clipId, ...pick(then, [...keys]) });
	}
	return { from, to };
}

/** Restores the alignment as it stood right after `revisionId`, as a new revision (nothing is deleted). */
export function revertToRevision(scope: WorkspaceScope, sessionId: string, revisionId: string, userId: string | null, input: unknown): EditOutcome {
	const { version: baseVersion, reason: reasonText } = parseInput(RevertRequest, input);
	const target = db.select().from(revisions).where(scope.where(revisions, eq(revisions.id, revisionId), eq(revisions.sessionId, sessionId))).get();
	if (!target) throw new Refusal('not_found', 'No such revision of this capture session.', 404);
	if (target.kind === 'status') throw new Refusal('not_revertible', 'A status change is not a state of the timing; revert to a change of offsets, span or reference.', 400);
	return commit(scope, sessionId, userId, baseVersion, reasonText, (session, sessionClips) => {
		const current = snapshotOf(session, sessionClips);
		const { from, to } = difference(current, stateAfter(scope, sessionId, target, current));
		if (!('referenceClipId' in to) && !to.usableSpan && to.clips!.length === 0) {
			throw new Refusal('no_change', `The timing is already as it was at version ${target.sessionVersion}.`, 400);
		}
		const affected = sessionClips.filter((c) => to.clips!.some((p) => p.clipId === c.id)).map((c) => c.cameraLabel);
		return {
			kind: 'revert',
			clipId: null,
			from,
			to: { ...to, revertedToVersion: target.sessionVersion },
			movesTiming: true,
			activity: `reverted the timing to version ${target.sessionVersion}${affected.length ? ` (${affected.join(', ')})` : ''}`
		};
	});
}

// ─── The same changes from plain forms (no JavaScript) ───────────────────────

/** A typed number: empty and non-numeric text are refused in words rather than read as 0 or NaN. */
const typedNumber = (what: string) =>
	z
		.string(`Give ${what}.`)
		.trim()
		.min(1, `Give ${what}.`)
		.refine((text) => Number.isFinite(Number(text)), `Give ${what} as a number, e.g. 2.5.`)
		.transform(Number);
/** A number that may be left empty (null: leave it as it is, or no trim). */
const optionalNumber = (what: string) =>
	z
		.string()
		.optional()
		.transform((text, context) => {
			const trimmed = text?.trim() ?? '';
			if (trimmed === '') return null;
			if (!Number.isFinite(Number(trimmed))) {
				context.addIssue({ code: 'custom', message: `Give ${what} as a number, e.g. 2.5.` });
				return z.NEVER;
			}
			return Number(trimmed);
		});
const formVersion = typedNumber('the session version your change is based on (reload the page)').pipe(version);
const formReason = z.string().optional().transform((text) => text?.trim() || undefined);

const PlacementForm = z.object({ version: formVersion, clipId, offsetSeconds: optionalNumber('the offset in seconds'), driftPpm: optionalNumber('the drift in ppm'), reason: formReason });
const ClipForm = z.object({ version: formVersion, clipId, reason: formReason });
const LockForm = ClipForm.extend({ locked: z.enum(['true', 'false'], 'Say locked: true or false.').transform((v) => v === 'true') });
const SpanForm = z.object({ version: formVersion, startSeconds: typedNumber('the span start in seconds'), endSeconds: typedNumber('the span end in seconds'), reason: formReason });
const TrimForm = z.object({
	version: formVersion,
	clipId,
	trimStartSeconds: optionalNumber('the trim start in seconds'),
	trimEndSeconds: optionalNumber('the trim end in seconds'),
	reason: formReason
});
const RevertForm = z.object({ version: formVersion, revisionId: z.string('Name the revision to go back to.').min(1, 'Name the revision to go back to.'), reason: formReason });

/**
 * A lane's typed offset and drift: each that differs from what is stored becomes its own
 * change (as in the live workbench), the second based on the version the first produced.
 * Both are checked before either is written, so a bad drift never leaves a lone offset saved.
 */
export function applyPlacementForm(scope: WorkspaceScope, sessionId: string, userId: string | null, fields: Record<string, string>): EditOutcome {
	const form = parseInput(PlacementForm, fields);
	const clip = clipIn(clipsOfSession(scope, sessionId), form.clipId);
	const edits: AlignmentEditInput[] = [];
	if (form.offsetSeconds !== null && form.offsetSeconds !== clip.offsetSeconds) edits.push({ kind: 'offset', clipId: clip.id, offsetSeconds: form.offsetSeconds, reason: form.reason });
	if (form.driftPpm !== null && form.driftPpm !== clip.driftPpm) edits.push({ kind: 'drift', clipId: clip.id, driftPpm: form.driftPpm, reason: form.reason });
	if (edits.length === 0) throw new Refusal('no_change', `${clip.cameraLabel} already has that offset and drift.`, 400);
	for (const edit of edits) parseInput(AlignmentEdit, edit);
	let outcome: EditOutcome | null = null;
	for (const edit of edits) outcome = applyAlignmentEdit(scope, sessionId, userId, { version: outcome?.session.version ?? form.version, edit });
	return outcome!;
}

export function applyReferenceForm(scope: WorkspaceScope, sessionId: string, userId: string | null, fields: Record<string, string>): EditOutcome {
	const { version: base, clipId: id, reason: why } = parseInput(ClipForm, fields);
	return applyAlignmentEdit(scope, sessionId, userId, { version: base, edit: { kind: 'reference', clipId: id, reason: why } });
}

export function applyLockForm(scope: WorkspaceScope, sessionId: string, userId: string | null, fields: Record<string, string>): EditOutcome {
	const { version: base, clipId: id, locked, reason: why } = parseInput(LockForm, fields);
	return applyAlignmentEdit(scope, sessionId, userId, { version: base, edit: { kind: 'lock', clipId: id, locked, reason: why } });
}

export function applyUsableSpanForm(scope: WorkspaceScope, sessionId: string, userId: string | null, fields: Record<string, string>): EditOutcome {
	const { version: base, startSeconds, endSeconds, reason: why } = parseInput(SpanForm, fields);
	return applyAlignmentEdit(scope, sessionId, userId, { version: base, edit: { kind: 'usable_span', startSeconds, endSeconds, reason: why } });
}

export function applyTrimForm(scope: WorkspaceScope, sessionId: string, userId: string | null, fields: Record<string, string>): EditOutcome {
	const { version: base, clipId: id, trimStartSeconds, trimEndSeconds, reason: why } = parseInput(TrimForm, fields);
	return applyAlignmentEdit(scope, sessionId, userId, { version: base, edit: { kind: 'trim', clipId: id, trimStartSeconds, trimEndSeconds, reason: why } });
}

export function revertForm(scope: WorkspaceScope, sessionId: string, userId: string | null, fields: Record<string, string>): EditOutcome {
	const { version: base, revisionId, reason: why } = parseInput(RevertForm, fields);
	return revertToRevision(scope, sessionId, revisionId, userId, { version: base, reason: why });
}

/** A JSON route's answer to an edit: the new workbench, or the refusal (a conflict carries the changes that overtook it). */
export function answerEdit(work: () => EditOutcome): Response {
	try {
		return json(work());
	} catch (err) {
		if (err instanceof EditConflict) {
			return json(
				{ error: { code: err.code, message: err.message, currentVersion: err.currentVersion, changes: err.changes } },
				{ status: 409 }
			);
		}
		apiRefusal(err);
	}
}
