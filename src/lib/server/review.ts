import { and, desc, eq, inArray, isNotNull } from 'drizzle-orm';
import { z } from 'zod';
import { buildTimingTable, type TableRow, type TimingTable } from '$lib/sync/timing-table';
import { MarkedEventError, markedEventEstimate, type MarkedEventEstimate } from '$lib/sync/marked-event';
import { activityOfSession, recordActivity } from './activity';
import { db } from './db';
import { clipsOfSession } from './capture-sessions';
import { captureSessions, memberships, revisions, reviewDecisions, spotChecks, users, type CaptureSession, type Clip } from './db/schema';
import { timingTableOf, type TimingTableResult } from './exports';
import { newId } from './ids';
import { sendMail } from './mail';
import { composeMail, type MailBlock } from './mail-body';
import { parseInput, Refusal } from './refusal';
import type { WorkspaceScope } from './scope';

/*
 * The review of a capture session (DESIGN.md, "Session states"): an editor sends an aligned
 * session for review; a reviewer spot-checks instants and then approves it or sends it back
 * to aligned with notes. Each step checks the state it starts from inside its transaction,
 * names the session version it was based on, leaves a status revision and an activity entry,
 * and then tells people by e-mail. The timing's version does not move: a status is not timing.
 */

// ─── Input ──────────────────────────────────────────────────────────────────

const version = z.number('Send the session version you looked at (version).').int().positive();
const note = (max: number) => z.string().trim().max(max, `Keep the note under ${max} characters.`).default('');

/** One camera's marked frame: `clipId:frame` as in a query or form, or `{ clipId, frame }` in JSON. */
const Mark = z.union(
	[
		z
			.string()
			.regex(/^[A-Za-z0-9_-]+:\d+$/, 'Give each mark as clipId:frame.')
			.transform((s) => {
				const [clipId, frame] = s.split(':');
				return { clipId, frame: Number(frame) };
			}),
		z.object({
			clipId: z.string().regex(/^[A-Za-z0-9_-]+$/, 'Give each mark\'s clipId as the clip\'s id.'),
			frame: z.number('Give each mark\'s frame as a number.').int('Give each mark\'s frame as a whole frame index.').min(0, 'Frame indices start at 0.')
		})
	],
	'Give each mark as clipId:frame or { clipId, frame }.'
);
const Marks = z
	.array(Mark, 'Give the marks as a list, one per camera.')
	.min(2, 'Mark the event in at least two cameras (mark=clipId:frame, twice or more).')
	.max(16, 'Mark at most 16 cameras.');

export const SendForReview = z.object({ version, note: note(2000) });
export const SpotCheckInput = z
	.object({
		version,
		instantSeconds: z.number('Give the instant in session seconds (instantSeconds).').finite(),
		verdict: z.enum(['in_sync', 'off', 'cannot_tell'], 'Give a verdict: in_sync, off or cannot_tell.'),
		offByFrames: z.number('Give "off by" as a number of frames.').min(-1000).max(1000).nullable().default(null),
		note: note(2000),
		/** The same visible event marked in two or more cameras; its result is kept with the check. */
		marks: Marks.nullable().default(null)
	})
	.refine((c) => c.verdict !== 'off' || (c.offByFrames !== null && c.offByFrames !== 0), {
		message: 'Say by about how many frames it is off (offByFrames, not 0).'
	});
export const ReviewDecisionInput = z
	.object({ version, decision: z.enum(['approve', 'send_back'], 'Decide approve or send_back.'), note: note(4000) })
	.refine((d) => d.decision !== 'send_back' || d.note.length > 0, { message: 'Say what the editor should look at when you send a session back (note).' });

export type SpotCheckFields = z.input<typeof SpotCheckInput>;

/** What a spot check keeps of its marked-event check: the estimate as it stood for the checked revision. */
export const MarkedEventResult = z.object({
	anchorClipId: z.string(),
	eventSessionSeconds: z.number(),
	worstDisagreementMs: z.number(),
	consistent: z.boolean(),
	cameras: z.array(
		z.object({
			clipId: z.string(),
			label: z.string(),
			frame: z.number().int(),
			impliedOffsetSeconds: z.number(),
			audioOffsetSeconds: z.number(),
			disagreementMs: z.number(),
			disagreementFrames: z.number(),
			resolutionMs: z.number()
		})
	)
});
export type MarkedEventResult = z.infer<typeof MarkedEventResult>;

/** A stored result that no longer reads as one (hand-edited, or from an older shape) shows as none rather than breaking the history. */
function markedEventFromJson(json: string | null): MarkedEventResult | null {
	if (json === null) return null;
	try {
		const parsed = MarkedEventResult.safeParse(JSON.parse(json));
		return parsed.success ? parsed.data : null;
	} catch {
		return null;
	}
}

// ─── Reading ────────────────────────────────────────────────────────────────

/** A spot check as the API answers it (and the OpenAPI document describes it). */
export const SpotCheckRecord = z.object({
	id: z.string(),
	sessionVersion: z.number().int(),
	instantSeconds: z.number(),
	verdict: z.enum(['in_sync', 'off', 'cannot_tell']),
	offByFrames: z.number().nullable(),
	note: z.string(),
	/** The visible event the reviewer marked with this check, or null. */
	markedEvent: MarkedEventResult.nullable(),
	who: z.string(),
	createdAt: z.number().describe('milliseconds since 1970')
});
export type SpotCheckView = z.infer<typeof SpotCheckRecord>;

export interface DecisionView {
	id: string;
	sessionVersion: number;
	decision: 'approve' | 'send_back';
	note: string;
	who: string;
	createdAt: number;
}

export function spotChecksOf(scope: WorkspaceScope, sessionId: string): SpotCheckView[] {
	return db
		.select({ check: spotChecks, who: users.displayName })
		.from(spotChecks)
		.leftJoin(users, eq(users.id, spotChecks.reviewerId))
		.where(scope.where(spotChecks, eq(spotChecks.sessionId, sessionId)))
		.orderBy(desc(spotChecks.createdAt))
		.all()
		.map(({ check, who }) => ({
			id: check.id,
			sessionVersion: check.sessionVersion,
			instantSeconds: check.instantSeconds,
			verdict: check.verdict,
			offByFrames: check.offByFrames,
			note: check.note,
			markedEvent: markedEventFromJson(check.markedEventJson),
			who: who ?? 'an API token',
			createdAt: check.createdAt.getTime()
		}));
}

export function decisionsOf(scope: WorkspaceScope, sessionId: string): DecisionView[] {
	return db
		.select({ decision: reviewDecisions, who: users.displayName })
		.from(reviewDecisions)
		.leftJoin(users, eq(users.id, reviewDecisions.reviewerId))
		.where(scope.where(reviewDecisions, eq(reviewDecisions.sessionId, sessionId)))
		.orderBy(desc(reviewDecisions.createdAt))
		.all()
		.map(({ decision, who }) => ({
			id: decision.id,
			sessionVersion: decision.sessionVersion,
			decision: decision.decision,
			note: decision.note,
			who: who ?? 'an API token',
			createdAt: decision.createdAt.getTime()
		}));
}

/** The session's review as everyone of the workspace may read it. */
export function reviewOf(scope: WorkspaceScope, sessionId: string) {
	const session = scope.session(sessionId);
	const decisions = decisionsOf(scope, sessionId);
	const approval = session.status === 'approved' ? (decisions.find((d) => d.decision === 'approve' && d.sessionVersion === session.version) ?? null) : null;
	return {
		session: {
			id: session.id,
			name: session.name,
			status: session.status,
			version: session.version,
			referenceClipId: session.referenceClipId,
			usableSpan:
				session.usableStartSeconds !== null && session.usableEndSeconds !== null ? { startSeconds: session.usableStartSeconds, endSeconds: session.usableEndSeconds } : null
		},
		approval,
		spotChecks: spotChecksOf(scope, sessionId),
		decisions,
		activity: activityOfSession(scope, sessionId, 30).map((a) => ({ ...a, createdAt: a.createdAt.getTime() }))
	};
}
export type ReviewState = ReturnType<typeof reviewOf>;

// ─── Instants to check ──────────────────────────────────────────────────────

/** N instants spread across the usable span (0: none), and instants picked one by one, session seconds. */
export interface InstantPick {
	count: number;
	at: number[];
}

const MAX_PICKED = 24;

export const InstantQuery = z.object({
	count: z.coerce.number('count must be a number.').int('count must be a whole number.').min(1, 'Ask for at least one instant.').max(24, 'Ask for at most 24 instants at a time.').optional(),
	at: z
		.array(z.coerce.number('at must be a session time in seconds.').finite('at must be a session time in seconds.'))
		.max(MAX_PICKED, `Pick at most ${MAX_PICKED} instants at a time; remove some first.`)
});

/** `?count=N` and `?at=<seconds>` (any number of times, each an instant picked on the timeline); null when neither is asked. */
export function instantPickOf(params: URLSearchParams): InstantPick | null {
	if (!params.has('count') && !params.has('at')) return null;
	const at = params.getAll('at').filter((t) => t.trim() !== '');
	const parsed = parseInput(InstantQuery, { count: params.get('count')?.trim() || undefined, at });
	if (parsed.count === undefined && parsed.at.length === 0) throw new Refusal('invalid_input', 'Ask for a number of instants (count) or pick one (at).', 400);
	// An instant picked twice (a double click) is checked once; a millisecond tells instants apart on any camera.
	const picked = [...new Set(parsed.at.map((t) => Math.round(t * 1000) / 1000))].sort((a, b) => a - b);
	return { count: parsed.count ?? 0, at: picked };
}

export interface ReviewCamera {
	id: string;
	label: string;
	position: 'high' | 'mid' | 'low' | 'other';
	isReference: boolean;
	fps: number;
	frameCount: number;
	offsetSeconds: number;
	driftPpm: number;
	/** Media length in the clip's own time, for drawing its lane. */
	durationSeconds: number;
	/** Whether the server has drawn its waveform peaks yet. */
	hasPeaks: boolean;
}

/** A row of the timing table at an instant to check; `picked` when a person chose it, rather than the spread. */
export type ReviewRow = TableRow & { picked: boolean };

export interface ReviewInstants {
	usableSpan: { startSeconds: number; endSeconds: number };
	/** From the first camera's first sample to the last camera's last, session seconds. */
	extent: { startSeconds: number; endSeconds: number };
	toleranceMs: number;
	cameras: ReviewCamera[];
	rows: ReviewRow[];
}

function camerasOf(table: TimingTable, clipRows: Clip[]): ReviewCamera[] {
	return table.clips.map((c) => {
		const row = clipRows.find((r) => r.id === c.id);
		return {
			id: c.id,
			label: c.label,
			position: c.position,
			isReference: c.isReference,
			fps: c.frameRate.fps,
			frameCount: c.frameCount,
			offsetSeconds: c.offsetSeconds,
			driftPpm: c.driftPpm,
			durationSeconds: row?.durationSeconds ?? c.frameCount / c.frameRate.fps,
			hasPeaks: !!row?.peaksPath
		};
	});
}

/**
 * Each camera's nearest frame (timecode and residual) at N instants spread across the usable
 * span and at the instants picked one by one, in time order: the timing table's own
 * arithmetic, so the review sees exactly what the export will write.
 */
export async function reviewInstants(scope: WorkspaceScope, sessionId: string, pick: InstantPick): Promise<ReviewInstants> {
	const result: TimingTableResult = await timingTableOf(scope, sessionId, { instants: { kind: 'count', count: 1 }, cameras: null, toleranceMs: null });
	const { startSeconds, endSeconds } = result.table.usableSpan;
	const rowsOver = (span: { startSeconds: number; endSeconds: number }, count: number) =>
		buildTimingTable({ session: result.table.session, usableSpan: span, clips: result.inputs, instants: { kind: 'count', count } }).rows;
	// N instants at the middles of N equal parts of the span, away from its edges where a camera may just be starting.
	const part = (endSeconds - startSeconds) / Math.max(1, pick.count);
	const spread = pick.count > 0 ? rowsOver({ startSeconds: startSeconds + part / 2, endSeconds: endSeconds - part / 2 + (pick.count === 1 ? 1e-9 : 0) }, pick.count) : [];
	// A picked instant is the single middle of a span a microsecond wide around it.
	const picked = pick.at.map((seconds, i) => ({ ...rowsOver({ startSeconds: seconds - 5e-7, endSeconds: seconds + 5e-7 }, 1)[0], index: pick.count + i, sessionSeconds: seconds }));
	const rows: ReviewRow[] = [...spread.map((row) => ({ ...row, picked: false })), ...picked.map((row) => ({ ...row, picked: true }))].sort((a, b) => a.sessionSeconds - b.sessionSeconds);
	const cameras = camerasOf(result.table, clipsOfSession(scope, sessionId));
	const extent = {
		startSeconds: Math.min(...cameras.map((c) => c.offsetSeconds)),
		endSeconds: Math.max(...cameras.map((c) => c.offsetSeconds + c.durationSeconds * (1 + c.driftPpm * 1e-6)))
	};
	return { usableSpan: result.table.usableSpan, extent, toleranceMs: result.table.toleranceMs, cameras, rows };
}

// ─── The marked-event check ─────────────────────────────────────────────────

export const MarkQuery = Marks;

/** The offsets implied by one visible event marked in several cameras, against the audio result; each camera named. */
export async function markedEventOf(scope: WorkspaceScope, sessionId: string, marks: { clipId: string; frame: number }[]): Promise<MarkedEventResult> {
	const result = await timingTableOf(scope, sessionId, { instants: { kind: 'count', count: 1 }, cameras: null, toleranceMs: null });
	const inputs = marks.map((mark) => {
		const input = result.inputs.find((i) => i.id === mark.clipId);
		if (!input) throw new Refusal('unknown_camera', `No aligned camera ${mark.clipId} in this capture session.`, 400);
		return { clipId: input.id, clip: { placement: input.placement, frames: input.frames }, frameRate: input.frameRate, frame: mark.frame };
	});
	try {
		const estimate: MarkedEventEstimate = markedEventEstimate(inputs, result.session.referenceClipId);
		return { ...estimate, cameras: estimate.cameras.map((c) => ({ ...c, label: result.inputs.find((i) => i.id === c.clipId)!.label })) };
	} catch (e) {
		if (e instanceof MarkedEventError) throw new Refusal(e.code, e.message, 400);
		throw e;
	}
}

// ─── Changing state ─────────────────────────────────────────────────────────

const STATUS_WORDS: Record<CaptureSession['status'], string> = { draft: 'a draft', aligned: 'aligned', in_review: 'in review', approved: 'approved' };

function requireState(session: CaptureSession, wanted: CaptureSession['status'], doing: string): void {
	if (session.status !== wanted) {
		const hint =
			wanted === 'in_review'
				? session.status === 'aligned'
					? ' An editor sends it for review first.'
					: ''
				: wanted === 'aligned' && session.status === 'draft'
					? ' Align it first.'
					: '';
		throw new Refusal('wrong_state', `This capture session is ${STATUS_WORDS[session.status]}; you can only ${doing} a session that is ${STATUS_WORDS[wanted]}.${hint}`, 409);
	}
}

function requireVersion(session: CaptureSession, version: number): void {
	if (session.version !== version) {
		throw new Refusal(
			'version_conflict',
			`The timing changed since you looked (you saw revision ${version}, it is now revision ${session.version}). Reload and check again.`,
			409
		);
	}
}

/** Moves the status inside a transaction that has already checked it; records the status revision. */
function moveStatus(scope: WorkspaceScope, session: CaptureSession, to: CaptureSession['status'], userId: string | null, reason: string): void {
	const updated = db
		.update(captureSessions)
		.set({ status: to, updatedAt: new Date() })
		.where(scope.where(captureSessions, eq(captureSessions.id, session.id), eq(captureSessions.status, session.status), eq(captureSessions.version, session.version)))
		.run();
	if (updated.changes === 0) throw new Refusal('version_conflict', 'Somebody changed this capture session at the same moment. Reload and try again.', 409);
	db.insert(revisions)
		.values({
			id: newId(),
			workspaceId: scope.workspaceId,
			sessionId: session.id,
			sessionVersion: session.version,
			userId,
			kind: 'status',
			fromJson: JSON.stringify({ status: session.status }),
			toJson: JSON.stringify({ status: to }),
			reason
		})
		.run();
}

export interface Actor {
	userId: string | null;
	/** Display name for messages: the person, or "An API token". */
	name: string;
}

export function actorOf(userId: string | null): Actor {
	if (!userId) return { userId: null, name: 'An API token' };
	const row = db.select({ displayName: users.displayName }).from(users).where(eq(users.id, userId)).get();
	return { userId, name: row?.displayName ?? 'Somebody' };
}

/** Editor: aligned → in review. */
export async function sendForReview(scope: WorkspaceScope, sessionId: string, actor: Actor, input: unknown, origin: string) {
	const { version: seen, note: text } = parseInput(SendForReview, input);
	const session = db.transaction(() => {
		const session = scope.session(sessionId);
		requireState(session, 'aligned', 'send for review');
		requireVersion(session, seen);
		if (session.usableStartSeconds === null || session.usableEndSeconds === null) {
			throw new Refusal('no_usable_span', 'Mark the usable span on the workbench before sending this session for review.', 409);
		}
		moveStatus(scope, session, 'in_review', actor.userId, text || 'Sent for review.');
		recordActivity(scope, { sessionId, userId: actor.userId, kind: 'review_requested', message: `sent revision ${session.version} for review${text ? `: “${text}”` : ''}` });
		return session;
	});
	const reviewers = membersWithRole(scope, 'reviewer');
	await mailEach(scope, reviewers, `Ready for review: ${session.name}`, [
		{ kind: 'text', text: `${actor.name} sent “${session.name}” (revision ${session.version}) for review.` },
		...noteBlock('Note', text),
		{ kind: 'link', label: 'Spot-check it here', href: `${origin}/sessions/${session.id}/review` }
	]);
	return reviewOf(scope, sessionId);
}

/** Reviewer: one spot check of an instant, while the session is in review, with the marked event if one was marked. */
export async function recordSpotCheck(scope: WorkspaceScope, sessionId: string, actor: Actor, input: unknown): Promise<SpotCheckView> {
	const check = parseInput(SpotCheckInput, input);
	// Worked out against the timing as it is now; the version check below makes sure that is the revision the reviewer saw.
	const markedEvent = check.marks ? await markedEventOf(scope, sessionId, check.marks) : null;
	const id = newId();
	db.transaction(() => {
		const session = scope.session(sessionId);
		requireState(session, 'in_review', 'spot-check');
		requireVersion(session, check.version);
		db.insert(spotChecks)
			.values({
				id,
				workspaceId: scope.workspaceId,
				sessionId,
				sessionVersion: session.version,
				instantSeconds: check.instantSeconds,
				reviewerId: actor.userId,
				verdict: check.verdict,
				offByFrames: check.verdict === 'off' ? check.offByFrames : null,
				note: check.note,
				markedEventJson: markedEvent ? JSON.stringify(markedEvent) : null
			})
			.run();
		const verdict = verdictWords(check);
		const event = markedEvent ? `; marked event ${markedEventWords(markedEvent)}` : '';
		recordActivity(scope, { sessionId, userId: actor.userId, kind: 'spot_check', message: `spot-checked ${check.instantSeconds.toFixed(3)} s: ${verdict}${event}${check.note ? ` (“${check.note}”)` : ''}` });
	});
	return spotChecksOf(scope, sessionId).find((c) => c.id === id)!;
}

/** A check's verdict in words, for activity entries and mail. */
function verdictWords(check: { verdict: SpotCheckView['verdict']; offByFrames: number | null }): string {
	if (check.verdict === 'in_sync') return 'in sync';
	if (check.verdict === 'cannot_tell') return 'cannot tell';
	return `off by about ${check.offByFrames} frame${Math.abs(check.offByFrames ?? 0) === 1 ? '' : 's'}`;
}

/** The marked event's verdict in words, for activity entries and mail. */
export function markedEventWords(result: MarkedEventResult): string {
	return `${result.consistent ? 'agrees with' : 'disagrees with'} the sound (worst ${result.worstDisagreementMs.toFixed(1)} ms)`;
}

/** Reviewer: approve (in review → approved) or send back with notes (in review → aligned). */
export async function decideReview(scope: WorkspaceScope, sessionId: string, actor: Actor, input: unknown, origin: string) {
	const { version: seen, decision, note: text } = parseInput(ReviewDecisionInput, input);
	const session = db.transaction(() => {
		const session = scope.session(sessionId);
		requireState(session, 'in_review', decision === 'approve' ? 'approve' : 'send back');
		requireVersion(session, seen);
		db.insert(reviewDecisions)
			.values({ id: newId(), workspaceId: scope.workspaceId, sessionId, sessionVersion: session.version, reviewerId: actor.userId, decision, note: text })
			.run();
		if (decision === 'approve') {
			moveStatus(scope, session, 'approved', actor.userId, text || `Approved revision ${session.version}.`);
			recordActivity(scope, { sessionId, userId: actor.userId, kind: 'review_approved', message: `approved revision ${session.version}${text ? `: “${text}”` : ''}` });
		} else {
			moveStatus(scope, session, 'aligned', actor.userId, text);
			recordActivity(scope, { sessionId, userId: actor.userId, kind: 'review_sent_back', message: `sent revision ${session.version} back to the editors: “${text}”` });
		}
		return session;
	});
	const checks = spotChecksOf(scope, sessionId).filter((c) => c.sessionVersion === session.version);
	const checkList: MailBlock[] = checks.length
		? [
				{
					kind: 'list',
					heading: 'Spot checks of this revision:',
					items: checks.map(
						(c) =>
							`${c.instantSeconds.toFixed(3)} s: ${verdictWords(c)}` +
							(c.markedEvent ? `; marked event ${markedEventWords(c.markedEvent)}` : '') +
							(c.note ? ` (“${c.note}”)` : '')
					)
				}
			]
		: [];
	const link = `${origin}/sessions/${session.id}`;
	if (decision === 'approve') {
		await mailEach(scope, editorsOf(scope, session), `Approved: ${session.name}`, [
			{ kind: 'text', text: `${actor.name} approved “${session.name}”, revision ${session.version}.` },
			...noteBlock('Note', text),
			...checkList,
			{ kind: 'link', label: 'Session', href: link }
		]);
		await mailEach(scope, membersWithRole(scope, 'processor'), `Approved and ready to export: ${session.name}`, [
			{ kind: 'text', text: `${actor.name} approved “${session.name}”, revision ${session.version}. Its timing table can go into the pipeline.` },
			{ kind: 'link', label: 'Export', href: `${link}/export` }
		]);
	} else {
		await mailEach(scope, editorsOf(scope, session), `Sent back: ${session.name}`, [
			{ kind: 'text', text: `${actor.name} sent “${session.name}” (revision ${session.version}) back to aligned.` },
			...noteBlock('What to look at', text),
			...checkList,
			{ kind: 'link', label: 'Review', href: `${link}/review` },
			{ kind: 'link', label: 'Workbench', href: `${link}/align` }
		]);
	}
	return reviewOf(scope, sessionId);
}

// ─── Who is told ────────────────────────────────────────────────────────────

interface Recipient {
	email: string;
	name: string;
}

function membersWithRole(scope: WorkspaceScope, role: 'reviewer' | 'processor' | 'editor', among?: string[]): Recipient[] {
	if (among && among.length === 0) return [];
	return db
		.select({ email: users.email, name: users.displayName })
		.from(memberships)
		.innerJoin(users, eq(users.id, memberships.userId))
		.where(and(eq(memberships.workspaceId, scope.workspaceId), eq(memberships.role, role), eq(users.active, true), among ? inArray(users.id, among) : undefined))
		.all();
}

/** The session's editors: whoever created it and whoever changed its timing, while they are editors here. */
function editorsOf(scope: WorkspaceScope, session: CaptureSession): Recipient[] {
	const authors = db
		.selectDistinct({ userId: revisions.userId })
		.from(revisions)
		.where(scope.where(revisions, eq(revisions.sessionId, session.id), isNotNull(revisions.userId)))
		.all()
		.map((r) => r.userId!);
	const ids = [...new Set([...(session.createdBy ? [session.createdBy] : []), ...authors])];
	return membersWithRole(scope, 'editor', ids);
}

const noteBlock = (label: string, text: string): MailBlock[] => (text ? [{ kind: 'quote', label, text }] : []);

/** Mail goes out after the change is committed; a mail server that is down must not undo a decision. */
async function mailEach(scope: WorkspaceScope, recipients: Recipient[], subject: string, blocks: MailBlock[]): Promise<void> {
	const results = await Promise.allSettled(
		recipients.map((r) => sendMail({ to: `${r.name} <${r.email}>`, subject, ...composeMail(subject, r.name, blocks), workspaceId: scope.workspaceId }))
	);
	for (const result of results) if (result.status === 'rejected') console.error('Review mail failed:', result.reason);
}
