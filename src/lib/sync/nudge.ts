import { clipTimeOf, type ClipPlacement } from './frames';
import { frameDurationSeconds, type Rational } from './rational';

/*
 * The workbench's arithmetic: how far one nudge moves a lane, how placements are
 * re-expressed when the reference clip changes, where all clips have media, and what
 * a usable span or a trim may be. Pure; the server checks the same rules it shows.
 */

export const NUDGE_STEPS = ['sample', 'millisecond', 'frame', 'tenFrames'] as const;
export type NudgeStep = (typeof NUDGE_STEPS)[number];

export const NUDGE_STEP_LABELS: Record<NudgeStep, string> = {
	sample: '1 sample',
	millisecond: '1 ms',
	frame: '1 frame',
	tenFrames: '10 frames'
};

export interface NudgeClip {
	sampleRate: number | null;
	frameRate: Rational | null;
}

/** Length of one step in seconds of clip time, or null when the clip lacks the rate it needs. */
export function stepSeconds(step: NudgeStep, clip: NudgeClip): number | null {
	switch (step) {
		case 'sample':
			return clip.sampleRate ? 1 / clip.sampleRate : null;
		case 'millisecond':
			return 0.001;
		case 'frame':
			return clip.frameRate ? frameDurationSeconds(clip.frameRate) : null;
		case 'tenFrames':
			return clip.frameRate ? 10 * frameDurationSeconds(clip.frameRate) : null;
	}
}

/** The offset after `count` steps (negative moves the lane earlier on the session timeline). */
export function nudgedOffset(offsetSeconds: number, step: NudgeStep, count: number, clip: NudgeClip): number | null {
	const size = stepSeconds(step, clip);
	return size === null ? null : offsetSeconds + count * size;
}

export interface PlacedClip extends ClipPlacement {
	clipId: string;
}

/**
 * Every placement re-expressed with `referenceId` as the new zero, so that each clip's
 * sessionTime stays the same instant: the new session time is the reference's clip time,
 * s' = (s − o_r)/(1 + d_r·1e-6), which gives o' = (o − o_r)/(1 + d_r·1e-6) and
 * 1 + d'·1e-6 = (1 + d·1e-6)/(1 + d_r·1e-6). Follows from DESIGN.md's formula.
 */
export function reexpressRelativeTo(placements: PlacedClip[], referenceId: string): PlacedClip[] {
	const reference = placements.find((p) => p.clipId === referenceId);
	if (!reference) throw new RangeError(`no clip ${referenceId} among the placements`);
	const scale = 1 + reference.driftPpm * 1e-6;
	return placements.map((p) =>
		p.clipId === referenceId
			? { clipId: p.clipId, offsetSeconds: 0, driftPpm: 0 }
			: {
					clipId: p.clipId,
					offsetSeconds: (p.offsetSeconds - reference.offsetSeconds) / scale,
					driftPpm: ((1 + p.driftPpm * 1e-6) / scale - 1) * 1e6
				}
	);
}

/** A session instant re-expressed on the timeline of a new reference placed at `reference`. */
export function sessionTimeForNewReference(sessionTimeSeconds: number, reference: ClipPlacement): number {
	return clipTimeOf(sessionTimeSeconds, reference);
}

export interface SpanClip extends ClipPlacement {
	durationSeconds: number;
	trimStartSeconds?: number | null;
	trimEndSeconds?: number | null;
	/**
	 * Clip time from half a frame before the first frame to half a frame after the last
	 * (`frameSpanSeconds`), when the clip has video: a timing table names a frame of this camera
	 * only inside it, so the common span the engine reports ends there too.
	 */
	frameSpan?: { start: number; end: number } | null;
}

export interface Span {
	startSeconds: number;
	endSeconds: number;
}

/** Where a clip has (untrimmed-away) media, and frames when it has video, in session time. */
export function clipSessionSpan(clip: SpanClip): Span {
	const scale = 1 + clip.driftPpm * 1e-6;
	let from = clip.trimStartSeconds ?? 0;
	let to = clip.trimEndSeconds ?? clip.durationSeconds;
	if (clip.frameSpan) {
		from = Math.max(from, clip.frameSpan.start);
		to = Math.min(to, clip.frameSpan.end);
	}
	return { startSeconds: clip.offsetSeconds + from * scale, endSeconds: clip.offsetSeconds + to * scale };
}

/** The common span: where every clip given has media; null when they do not all overlap. */
export function commonSpan(clips: SpanClip[]): Span | null {
	if (clips.length === 0) return null;
	const spans = clips.map(clipSessionSpan);
	const startSeconds = Math.max(...spans.map((s) => s.startSeconds));
	const endSeconds = Math.min(...spans.map((s) => s.endSeconds));
	return endSeconds > startSeconds ? { startSeconds, endSeconds } : null;
}

/** Float slack for spans computed from stored offsets: far below a sample at 192 kHz. */
const SPAN_SLACK_SECONDS = 1e-6;

/** Why a usable span cannot be stored, in words, or null when it can. */
export function usableSpanProblem(span: Span, common: Span | null): string | null {
	if (!Number.isFinite(span.startSeconds) || !Number.isFinite(span.endSeconds)) return 'Give the usable span a start and an end in seconds.';
	if (span.endSeconds <= span.startSeconds) return 'The usable span must end after it starts.';
	if (!common) return 'The clips have no common span (no instant where all of them have media), so there is nothing to mark.';
	if (span.startSeconds < common.startSeconds - SPAN_SLACK_SECONDS || span.endSeconds > common.endSeconds + SPAN_SLACK_SECONDS) {
		return `The usable span must lie inside the common span, ${common.startSeconds.toFixed(3)} s to ${common.endSeconds.toFixed(3)} s.`;
	}
	return null;
}

/** Why a clip's trim cannot be stored, or null. Trims are in the clip's own time; null means "no trim" at that end. */
export function trimProblem(trim: { trimStartSeconds: number | null; trimEndSeconds: number | null }, durationSeconds: number): string | null {
	const start = trim.trimStartSeconds ?? 0;
	const end = trim.trimEndSeconds ?? durationSeconds;
	if (!Number.isFinite(start) || !Number.isFinite(end)) return 'Give trims in seconds of the clip.';
	if (start < 0) return 'A trim cannot start before the clip does (0 s).';
	if (end > durationSeconds + SPAN_SLACK_SECONDS) return `A trim cannot end after the clip does (${durationSeconds.toFixed(3)} s).`;
	if (end <= start) return 'The trimmed clip must end after it starts.';
	return null;
}
