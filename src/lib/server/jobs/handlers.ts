import { spawn } from 'node:child_process';
import { writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { eq } from 'drizzle-orm';
import { recordActivity } from '../activity';
import type { AlignmentPatch } from '../alignment-edits';
import { db } from '../db';
import { captureSessions, clips, revisions, type Clip } from '../db/schema';
import { newId } from '../ids';
import { alignableClips } from '../ingest';
import { computePeaks } from '../media/peaks';
import { probeMedia } from '../media/probe';
import { makeAudioProxy } from '../media/proxy';
import { WorkspaceScope } from '../scope';
import { derivedDir } from '../storage';
import { enqueueJob, pendingJob } from './queue';
import { JobFailure, registerJobHandler, type JobContext } from './runner';

function clipOf(context: JobContext): Clip {
	const clipId = context.job.clipId;
	const clip = clipId ? db.select().from(clips).where(eq(clips.id, clipId)).get() : undefined;
	if (!clip) throw new JobFailure('The clip of this job no longer exists.');
	return clip;
}

/** Full probe: frame timestamps where the timing is not constant, then the derived media. */
async function probeJob(context: JobContext): Promise<void> {
	const clip = clipOf(context);
	context.progress(0.1, 'Reading stream timing');
	const probe = await probeMedia(clip.storagePath, { frameTimes: 'auto' });
	const video = probe.video;
	let frameTimesPath: string | null = null;
	if (video?.variableFrameRate && video.frameTimesSeconds) {
		frameTimesPath = join(await derivedDir(clip.id), 'frame-times.json');
		await writeFile(frameTimesPath, JSON.stringify(Array.from(video.frameTimesSeconds)));
	}
	const scope = new WorkspaceScope(clip.workspaceId);
	db.transaction(() => {
		db.update(clips)
			.set({
				state: 'ready',
				variableFrameRate: video?.variableFrameRate ?? false,
				frameTimesPath,
				probeJson: JSON.stringify({
					formatName: probe.formatName,
					startSeconds: probe.startSeconds,
					averageFrameRate: video?.averageFrameRate ?? null,
					frameCount: video?.frameCount ?? null,
					videoDurationSeconds: video?.durationSeconds ?? null,
					audioDurationSeconds: probe.audio?.durationSeconds ?? null
				})
			})
			.where(eq(clips.id, clip.id))
			.run();
		context.complete(video?.variableFrameRate ? 'Probed: variable frame timing, timestamps kept' : 'Probed');
	});
	if (clip.audioCodec) {
		enqueueJob({ workspaceId: clip.workspaceId, sessionId: clip.sessionId, clipId: clip.id, kind: 'peaks' });
		enqueueJob({ workspaceId: clip.workspaceId, sessionId: clip.sessionId, clipId: clip.id, kind: 'proxy' });
	}
	alignWhenAllProbed(scope, clip.sessionId);
}

/**
 * Once every clip of a session is probed, alignment starts by itself: the first time, and
 * again when clips arrive later (uploads finish one by one) as long as nobody has edited the
 * alignment by hand since — a person's nudges are never overwritten without being asked.
 */
function alignWhenAllProbed(scope: WorkspaceScope, sessionId: string): void {
	const session = scope.session(sessionId);
	const all = db.select().from(clips).where(eq(clips.sessionId, sessionId)).all();
	if (all.some((c) => c.state === 'probing')) return;
	const alignable = alignableClips(scope, sessionId);
	if (alignable.length < 2 || pendingJob('align', { sessionId })) return;
	const neverAligned = alignable.some((c) => c.matched === null);
	const editedByHand = db
		.select({ kind: revisions.kind })
		.from(revisions)
		.where(eq(revisions.sessionId, sessionId))
		.all()
		.some((r) => r.kind !== 'alignment');
	if (session.status === 'draft' || (neverAligned && !editedByHand)) {
		enqueueJob({ workspaceId: scope.workspaceId, sessionId, kind: 'align', params: { automatic: true } });
	}
}

async function peaksJob(context: JobContext): Promise<void> {
	const clip = clipOf(context);
	const dir = await derivedDir(clip.id);
	await computePeaks(clip.storagePath, dir, clip.sampleRate ?? 48000, {
		signal: context.signal,
		durationSeconds: clip.durationSeconds ?? undefined,
		onProgress: (f) => context.progress(f, 'Drawing the waveform')
	});
	db.transaction(() => {
		db.update(clips).set({ peaksPath: dir }).where(eq(clips.id, clip.id)).run();
		context.complete('Waveform ready');
	});
}

async function proxyJob(context: JobContext): Promise<void> {
	const clip = clipOf(context);
	context.progress(0.2, 'Encoding the listening copy');
	const out = join(await derivedDir(clip.id), 'proxy.m4a');
	await makeAudioProxy(clip.storagePath, out, context.signal);
	db.transaction(() => {
		db.update(clips).set({ audioProxyPath: out }).where(eq(clips.id, clip.id)).run();
		context.complete('Listening copy ready');
	});
}

interface AlignJobResult {
	referenceIndex: number;
	commonSpan: { start: number; end: number } | null;
	maxInconsistencyMs: number;
	notes: string[];
	clips: { matched: boolean; offsetSeconds: number | null; driftPpm: number | null; driftMeasured: boolean; confidence: number; notes: string[] }[];
	pairs: { a: number; b: number; matched: boolean; confidence: number }[];
	links: { a: number; b: number; offsetResidualMs: number; used: boolean }[];
}

const STAGE_LABELS = { probe: 'Reading clips', decode: 'Decoding sound', pairs: 'Comparing clips', solve: 'Solving the timeline' } as const;
const STAGE_SPAN = { probe: [0, 0.05], decode: [0.05, 0.5], pairs: [0.5, 0.95], solve: [0.95, 1] } as const;

/** Runs the engine in a child process (scripts/align-job.ts, bundled by scripts/engine.mjs) and stores its result. */
function runEngine(paths: string[], referenceIndex: number | undefined, context: JobContext): Promise<AlignJobResult> {
	return new Promise((resolve, reject) => {
		const child = spawn(process.execPath, ['scripts/engine.mjs', 'align-job', JSON.stringify({ paths, referenceIndex })], {
			stdio: ['ignore', 'pipe', 'pipe'],
			signal: context.signal
		});
		let stdout = '';
		let lastError = '';
		let pending = '';
		child.stdout.setEncoding('utf8');
		child.stdout.on('data', (t: string) => (stdout += t));
		child.stderr.setEncoding('utf8');
		child.stderr.on('data', (t: string) => {
			pending += t;
			const lines = pending.split('\n');
			pending = lines.pop() ?? '';
			for (const line of lines) {
				try {
					const event = JSON.parse(line) as { stage?: keyof typeof STAGE_SPAN; done?: number; total?: number; error?: string };
					if (event.error) lastError = event.error;
					else if (event.stage && event.total) {
						const [from, to] = STAGE_SPAN[event.stage];
						context.progress(from + ((to - from) * (event.done ?? 0)) / event.total, STAGE_LABELS[event.stage]);
					}
				} catch {
					if (line.trim()) lastError = line.trim();
				}
			}
		});
		child.on('error', reject);
		child.on('close', (code) => {
			if (code === 0) resolve(JSON.parse(stdout) as AlignJobResult);
			else reject(new JobFailure(lastError ? `Alignment failed: ${lastError}` : `Alignment stopped (exit ${code}).`));
		});
	});
}

async function alignJob(context: JobContext): Promise<void> {
	const sessionId = context.job.sessionId;
	if (!sessionId) throw new JobFailure('This alignment job names no capture session.');
	const scope = new WorkspaceScope(context.job.workspaceId);
	const session = scope.session(sessionId);
	const candidates = alignableClips(scope, sessionId);
	if (candidates.length < 2) throw new JobFailure('Alignment needs at least two probed clips with sound.');
	const referenceIndex = session.referenceClipId ? candidates.findIndex((c) => c.id === session.referenceClipId) : -1;
	context.progress(0.01, 'Starting the engine');
	const result = await runEngine(
		candidates.map((c) => c.storagePath),
		referenceIndex >= 0 ? referenceIndex : undefined,
		context
	);
	const reference = candidates[result.referenceIndex];
	const matchedCount = result.clips.filter((c) => c.matched).length;

	db.transaction(() => {
		const before = db.select().from(captureSessions).where(eq(captureSessions.id, sessionId)).get()!;
		const usableSpan = {
			startSeconds: before.usableStartSeconds ?? result.commonSpan?.start ?? null,
			endSeconds: before.usableEndSeconds ?? result.commonSpan?.end ?? null
		};
		// The revision holds everything the run set, reference and span included, so reverting to
		// or past it restores the timing as a whole (see stateAfter in alignment-edits).
		const fromState: AlignmentPatch = {
			referenceClipId: before.referenceClipId,
			usableSpan: { startSeconds: before.usableStartSeconds, endSeconds: before.usableEndSeconds },
			clips: candidates.map((c) => ({ clipId: c.id, offsetSeconds: c.offsetSeconds, driftPpm: c.driftPpm, syncMethod: c.syncMethod, matched: c.matched }))
		};
		const toState: AlignmentPatch = {
			referenceClipId: reference.id,
			usableSpan,
			// A locked lane keeps its placement: recorded as it stays.
			clips: candidates.map((c, i) => {
				const solved = result.clips[i];
				return c.locked
					? { clipId: c.id, offsetSeconds: c.offsetSeconds, driftPpm: c.driftPpm, syncMethod: c.syncMethod, matched: c.matched }
					: { clipId: c.id, offsetSeconds: solved.offsetSeconds, driftPpm: solved.driftPpm, syncMethod: solved.matched ? 'audio' : null, matched: solved.matched };
			})
		};
		candidates.forEach((clip, i) => {
			if (clip.locked) return;
			const solved = result.clips[i];
			db.update(clips)
				.set({
					offsetSeconds: solved.offsetSeconds,
					driftPpm: solved.driftPpm,
					confidence: solved.confidence,
					matched: solved.matched,
					syncMethod: solved.matched ? 'audio' : null,
					syncDetailJson: JSON.stringify({
						driftMeasured: solved.driftMeasured,
						notes: solved.notes,
						pairs: result.pairs
							.filter((p) => p.a === i || p.b === i)
							.map((p) => ({ ...p, a: candidates[p.a].id, b: candidates[p.b].id }))
					})
				})
				.where(eq(clips.id, clip.id))
				.run();
		});
		const version = before.version + 1;
		db.update(captureSessions)
			.set({
				referenceClipId: reference.id,
				status: 'aligned',
				version,
				updatedAt: new Date(),
				usableStartSeconds: usableSpan.startSeconds,
				usableEndSeconds: usableSpan.endSeconds
			})
			.where(eq(captureSessions.id, sessionId))
			.run();
		db.insert(revisions)
			.values({
				id: newId(),
				workspaceId: scope.workspaceId,
				sessionId,
				sessionVersion: version,
				userId: context.job.requestedBy,
				kind: 'alignment',
				fromJson: JSON.stringify(fromState),
				toJson: JSON.stringify(toState),
				reason: `Aligned by sound (${matchedCount} of ${candidates.length} clips matched; pairs disagree by at most ${result.maxInconsistencyMs.toFixed(2)} ms)`
			})
			.run();
		recordActivity(scope, {
			sessionId,
			userId: context.job.requestedBy,
			kind: 'aligned',
			message: `aligned ${candidates.length} clips by sound: ${matchedCount} matched, reference ${reference.cameraLabel}`
		});
		context.complete(`Aligned: ${matchedCount} of ${candidates.length} clips matched`, {
			commonSpan: result.commonSpan,
			maxInconsistencyMs: result.maxInconsistencyMs,
			notes: result.notes,
			links: result.links
		});
	});
	alignWhenAllProbed(scope, sessionId);
}

export function registerAnalysisHandlers(): void {
	registerJobHandler('probe', probeJob);
	registerJobHandler('peaks', peaksJob);
	registerJobHandler('proxy', proxyJob);
	registerJobHandler('align', alignJob);
}
