import { frameCountOf, frameTimeSeconds, sessionTimeOf, type FramedClip } from './frames';
import { frameDurationSeconds, type Rational } from './rational';

/*
 * An independent check of the audio result: a reviewer marks the frame in which each camera
 * shows the same visible event (a flash, a clap, a door closing). If the audio offsets were
 * exact, every marked frame would map to the same session instant (within a frame). What is
 * left over is the disagreement between the picture and the sound. Pure: no I/O.
 */

export interface MarkedFrame {
	clipId: string;
	clip: FramedClip;
	/** Exact rate; for variable frame timing the nominal one. */
	frameRate: Rational;
	/** 0-based index of the frame the reviewer marked. */
	frame: number;
}

export interface MarkedEventCamera {
	clipId: string;
	frame: number;
	/** Where the audio result puts the marked frame on the session timeline. */
	sessionSeconds: number;
	/** The offset this camera would need for its marked frame to show the event at the event's instant. */
	impliedOffsetSeconds: number;
	audioOffsetSeconds: number;
	/** impliedOffset − audio offset: positive means the picture says the clip sits later. */
	disagreementMs: number;
	/** The same in frames of this camera. */
	disagreementFrames: number;
	/** What a mark cannot resolve: half a frame of this camera plus half a frame of the anchor camera, ms. */
	resolutionMs: number;
}

export interface MarkedEventEstimate {
	/** The camera whose mark defines the event's instant (the session's reference when it was marked). */
	anchorClipId: string;
	eventSessionSeconds: number;
	cameras: MarkedEventCamera[];
	/** Largest |disagreement| over the other cameras, ms (0 with one camera). */
	worstDisagreementMs: number;
	/** Whether every camera's disagreement lies within what its mark can resolve. */
	consistent: boolean;
}

export class MarkedEventError extends Error {
	constructor(
		readonly code: 'too_few_marks' | 'frame_out_of_range' | 'duplicate_camera',
		message: string
	) {
		super(message);
		this.name = 'MarkedEventError';
	}
}

/** The half-width of one frame slot, seconds: half the gap to the neighbour for variable timing. */
function halfFrameSeconds(mark: MarkedFrame): number {
	const frames = mark.clip.frames;
	if (frames.kind === 'constant') return frameDurationSeconds(frames.frameRate) / 2;
	const count = frameCountOf(frames);
	const i = mark.frame;
	const neighbour = i + 1 < count ? frameTimeSeconds(i + 1, frames) - frameTimeSeconds(i, frames) : i > 0 ? frameTimeSeconds(i, frames) - frameTimeSeconds(i - 1, frames) : frameDurationSeconds(mark.frameRate);
	return neighbour / 2;
}

/**
 * The offsets implied by one visible event marked in two or more cameras, against the audio
 * result. `anchorClipId` (normally the session's reference clip) defines the event's instant;
 * without it, or when it was not marked, the first mark does.
 */
export function markedEventEstimate(marks: MarkedFrame[], anchorClipId?: string | null): MarkedEventEstimate {
	if (marks.length < 2) throw new MarkedEventError('too_few_marks', 'Mark the event in at least two cameras.');
	const seen = new Set<string>();
	for (const mark of marks) {
		if (seen.has(mark.clipId)) throw new MarkedEventError('duplicate_camera', 'Mark each camera once.');
		seen.add(mark.clipId);
		if (!Number.isInteger(mark.frame) || mark.frame < 0 || mark.frame >= frameCountOf(mark.clip.frames)) {
			throw new MarkedEventError('frame_out_of_range', `Frame ${mark.frame} is not a frame of that clip.`);
		}
	}
	const anchor = marks.find((m) => m.clipId === anchorClipId) ?? marks[0];
	const sessionOf = (m: MarkedFrame) => sessionTimeOf(frameTimeSeconds(m.frame, m.clip.frames), m.clip.placement);
	const eventSessionSeconds = sessionOf(anchor);
	const anchorHalf = halfFrameSeconds(anchor);
	const cameras = marks.map((mark): MarkedEventCamera => {
		const sessionSeconds = sessionOf(mark);
		// sessionTime is linear in the offset, so moving the clip by (event − where it is) puts its mark on the event.
		const disagreementSeconds = eventSessionSeconds - sessionSeconds;
		const fps = mark.frameRate.num / mark.frameRate.den;
		return {
			clipId: mark.clipId,
			frame: mark.frame,
			sessionSeconds,
			impliedOffsetSeconds: mark.clip.placement.offsetSeconds + disagreementSeconds,
			audioOffsetSeconds: mark.clip.placement.offsetSeconds,
			disagreementMs: disagreementSeconds * 1000,
			disagreementFrames: disagreementSeconds * fps,
			resolutionMs: mark === anchor ? 0 : (halfFrameSeconds(mark) + anchorHalf) * 1000
		};
	});
	const others = cameras.filter((c) => c.clipId !== anchor.clipId);
	return {
		anchorClipId: anchor.clipId,
		eventSessionSeconds,
		cameras,
		worstDisagreementMs: Math.max(0, ...others.map((c) => Math.abs(c.disagreementMs))),
		consistent: others.every((c) => Math.abs(c.disagreementMs) <= c.resolutionMs + 1e-9)
	};
}
