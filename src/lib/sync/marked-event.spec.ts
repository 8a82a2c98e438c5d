import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { parseRational, type Truth } from '../../../scripts/fixtures/truth';
import type { FrameTiming } from './frames';
import { MarkedEventError, markedEventEstimate, type MarkedFrame } from './marked-event';

const truth = JSON.parse(readFileSync('fixtures/fountain-lap/truth.json', 'utf8')) as Truth;

function markOf(file: string, label: string, placement = { offsetSeconds: 0, driftPpm: 0 }): MarkedFrame {
	const clip = truth.clips.find((c) => c.file === file)!;
	const frameRate = parseRational(clip.frameRate);
	const frames: FrameTiming = { kind: 'constant', frameRate, firstFrameSeconds: clip.videoStartSeconds, frameCount: clip.frameCount };
	const mark = clip.marks.find((m) => m.label === label)!;
	return { clipId: file, clip: { placement, frames }, frameRate, frame: mark.flashFrame };
}

const truthPlacement = (file: string) => {
	const clip = truth.clips.find((c) => c.file === file)!;
	return { offsetSeconds: clip.offsetSeconds!, driftPpm: clip.driftPpm! };
};

describe('markedEventEstimate on the fountain-lap fixture', () => {
	for (const label of ['slate clap', 'café door']) {
		it(`agrees with the truth within one frame for the ${label}`, () => {
			const marks = ['high.mp4', 'mid.mp4', 'low.mp4'].map((f) => markOf(f, label, truthPlacement(f)));
			const estimate = markedEventEstimate(marks, 'high.mp4');
			expect(estimate.anchorClipId).toBe('high.mp4');
			for (const camera of estimate.cameras) {
				// The flash is drawn on the frame nearest the picture instant, so each mark is good to
				// half a frame of its camera plus half of the anchor's (fixtures/README.md).
				expect(Math.abs(camera.disagreementFrames)).toBeLessThan(1);
				expect(Math.abs(camera.disagreementMs)).toBeLessThanOrEqual(camera.resolutionMs + 1e-6);
			}
			expect(estimate.consistent).toBe(true);
		});
	}

	it('shows a deliberate 100 ms audio error as a 100 ms disagreement (5 frames at 50 fps)', () => {
		const wrong = { ...truthPlacement('mid.mp4') };
		wrong.offsetSeconds -= 0.1;
		const estimate = markedEventEstimate([markOf('high.mp4', 'slate clap', truthPlacement('high.mp4')), markOf('mid.mp4', 'slate clap', wrong)], 'high.mp4');
		const mid = estimate.cameras.find((c) => c.clipId === 'mid.mp4')!;
		expect(mid.disagreementMs).toBeGreaterThan(100 - 20);
		expect(mid.disagreementMs).toBeLessThan(100 + 20);
		expect(mid.impliedOffsetSeconds - mid.audioOffsetSeconds).toBeCloseTo(mid.disagreementMs / 1000, 12);
		// 100 ms at 50 fps is 5 frames; each mark is only good to a frame slot, so 4–6.
		expect(Math.abs(mid.disagreementFrames - 5)).toBeLessThanOrEqual(1);
		expect(estimate.consistent).toBe(false);
	});

	it('anchors on the first mark when the reference was not marked, and refuses bad marks', () => {
		const marks = [markOf('mid.mp4', 'slate clap', truthPlacement('mid.mp4')), markOf('low.mp4', 'slate clap', truthPlacement('low.mp4'))];
		expect(markedEventEstimate(marks, 'high.mp4').anchorClipId).toBe('mid.mp4');
		expect(() => markedEventEstimate(marks.slice(0, 1))).toThrow(MarkedEventError);
		expect(() => markedEventEstimate([marks[0], { ...marks[1], frame: 1e6 }])).toThrow(/not a frame/);
		expect(() => markedEventEstimate([marks[0], marks[0]])).toThrow(/once/);
	});
});
