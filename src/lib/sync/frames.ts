import { frameDurationSeconds, type Rational } from './rational';

/** Where a clip sits on the session timeline: sessionTime = offsetSeconds + clipTime × (1 + driftPpm·1e-6). */
export interface ClipPlacement {
	offsetSeconds: number;
	driftPpm: number;
}

/**
 * A clip's video frames in presentation order: constant timing from an exact rate, or the real
 * timestamps (variable frame timing, phones), never N / fps.
 */
export type FrameTiming =
	| { kind: 'constant'; frameRate: Rational; firstFrameSeconds: number; frameCount: number }
	| { kind: 'variable'; frameTimesSeconds: ArrayLike<number> };

export interface FramedClip {
	placement: ClipPlacement;
	frames: FrameTiming;
}

export function sessionTimeOf(clipTimeSeconds: number, placement: ClipPlacement): number {
	return placement.offsetSeconds + clipTimeSeconds * (1 + placement.driftPpm * 1e-6);
}

export function clipTimeOf(sessionTimeSeconds: number, placement: ClipPlacement): number {
	return (sessionTimeSeconds - placement.offsetSeconds) / (1 + placement.driftPpm * 1e-6);
}

export function frameCountOf(frames: FrameTiming): number {
	return frames.kind === 'constant' ? frames.frameCount : frames.frameTimesSeconds.length;
}

/** Presentation time (clip time, seconds) of frame `index`. */
export function frameTimeSeconds(index: number, frames: FrameTiming): number {
	if (frames.kind === 'variable') return frames.frameTimesSeconds[index];
	return frames.firstFrameSeconds + (index * frames.frameRate.den) / frames.frameRate.num;
}

/**
 * The clip times a frame can answer for: from half a frame before the first frame to half a frame
 * after the last (the same limits `nearestFrame` keeps). Audio often runs on past the last frame;
 * an instant there would be shown by a frame more than half a frame away.
 */
export function frameSpanSeconds(frames: FrameTiming): { start: number; end: number } | null {
	const count = frameCountOf(frames);
	if (count === 0) return null;
	if (frames.kind === 'constant') {
		const halfFrame = frameDurationSeconds(frames.frameRate) / 2;
		return { start: frames.firstFrameSeconds - halfFrame, end: frameTimeSeconds(count - 1, frames) + halfFrame };
	}
	const times = frames.frameTimesSeconds;
	const firstGap = count > 1 ? times[1] - times[0] : 0;
	const lastGap = count > 1 ? times[count - 1] - times[count - 2] : 0;
	return { start: times[0] - firstGap / 2, end: times[count - 1] + lastGap / 2 };
}

/** Index of the frame whose presentation time is nearest to clipTime, or null beyond the clip's frames. */
export function nearestFrame(clipTimeSeconds: number, frames: FrameTiming): number | null {
	const count = frameCountOf(frames);
	if (count === 0 || !Number.isFinite(clipTimeSeconds)) return null;
	if (frames.kind === 'constant') {
		const halfFrame = frameDurationSeconds(frames.frameRate) / 2;
		const index = Math.round(((clipTimeSeconds - frames.firstFrameSeconds) * frames.frameRate.num) / frames.frameRate.den);
		if (index < 0) return clipTimeSeconds >= frames.firstFrameSeconds - halfFrame ? 0 : null;
		if (index >= count) return clipTimeSeconds <= frameTimeSeconds(count - 1, frames) + halfFrame ? count - 1 : null;
		return index;
	}
	const times = frames.frameTimesSeconds;
	const firstGap = count > 1 ? times[1] - times[0] : 0;
	const lastGap = count > 1 ? times[count - 1] - times[count - 2] : 0;
	if (clipTimeSeconds < times[0] - firstGap / 2 || clipTimeSeconds > times[count - 1] + lastGap / 2) return null;
	let low = 0;
	let high = count - 1;
	while (high - low > 1) {
		const middle = (low + high) >> 1;
		if (times[middle] <= clipTimeSeconds) low = middle;
		else high = middle;
	}
	return Math.abs(times[high] - clipTimeSeconds) < Math.abs(clipTimeSeconds - times[low]) ? high : low;
}

/** The frame of a clip that shows a session instant (DESIGN.md's time model), or null. */
export function frameAt(sessionTimeSeconds: number, clip: FramedClip): number | null {
	return nearestFrame(clipTimeOf(sessionTimeSeconds, clip.placement), clip.frames);
}
