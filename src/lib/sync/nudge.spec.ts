import { describe, expect, it } from 'vitest';
import { frameSpanSeconds, sessionTimeOf } from './frames';
import { clipSessionSpan, commonSpan, nudgedOffset, reexpressRelativeTo, stepSeconds, trimProblem, usableSpanProblem } from './nudge';

const high = { sampleRate: 48000, frameRate: { num: 60000, den: 1001 } };
const low = { sampleRate: 44100, frameRate: { num: 30, den: 1 } };

describe('nudge steps', () => {
	it('sizes each step from the clip’s own rates', () => {
		// One sample is 1/rate; one frame is den/num (common practice; 60000/1001 is the 59.94 fps NTSC rate, SMPTE ST 12-1).
		expect(stepSeconds('sample', high)).toBe(1 / 48000);
		expect(stepSeconds('sample', low)).toBe(1 / 44100);
		expect(stepSeconds('millisecond', low)).toBe(0.001);
		expect(stepSeconds('frame', high)).toBe(1001 / 60000);
		expect(stepSeconds('tenFrames', low)).toBeCloseTo(1 / 3, 15);
		expect(stepSeconds('frame', { sampleRate: 48000, frameRate: null })).toBeNull();
	});

	it('moves the offset by whole steps either way', () => {
		expect(nudgedOffset(2.5, 'frame', -1, { sampleRate: 48000, frameRate: { num: 50, den: 1 } })).toBeCloseTo(2.48, 15);
		expect(nudgedOffset(2.5, 'sample', 3, high)! - 2.5).toBeCloseTo(3 / 48000, 15);
		expect(nudgedOffset(0, 'frame', 1, { sampleRate: null, frameRate: null })).toBeNull();
	});
});

describe('choosing another reference', () => {
	it('keeps every clip’s instants where they were', () => {
		const before = [
			{ clipId: 'a', offsetSeconds: 0, driftPpm: 0 },
			{ clipId: 'b', offsetSeconds: 2.5, driftPpm: -45 },
			{ clipId: 'c', offsetSeconds: 8.8, driftPpm: 31 }
		];
		const after = reexpressRelativeTo(before, 'b');
		expect(after.find((p) => p.clipId === 'b')).toEqual({ clipId: 'b', offsetSeconds: 0, driftPpm: 0 });
		// Two events heard at clip times tc (in c) and ta (in a) at one instant must still coincide (DESIGN.md formula).
		for (const clipTime of [0, 10, 60]) {
			const instantBefore = sessionTimeOf(clipTime, before[2]);
			const aTime = instantBefore; // a is the old reference: its clip time is the old session time
			const cAfter = sessionTimeOf(clipTime, after.find((p) => p.clipId === 'c')!);
			const aAfter = sessionTimeOf(aTime, after.find((p) => p.clipId === 'a')!);
			expect(cAfter).toBeCloseTo(aAfter, 9);
		}
		// And the round trip back to a gives the original placements.
		const back = reexpressRelativeTo(after, 'a');
		expect(back[1].offsetSeconds).toBeCloseTo(2.5, 12);
		expect(back[2].driftPpm).toBeCloseTo(31, 9);
	});
});

describe('spans', () => {
	const clips = [
		{ offsetSeconds: 0, driftPpm: 0, durationSeconds: 86 },
		{ offsetSeconds: 2.5, driftPpm: 0, durationSeconds: 82 },
		{ offsetSeconds: 8.8, driftPpm: 0, durationSeconds: 74, trimStartSeconds: 1, trimEndSeconds: null }
	];

	it('finds where all clips have media, trims included', () => {
		expect(clipSessionSpan(clips[2])).toEqual({ startSeconds: 9.8, endSeconds: 82.8 });
		const common = commonSpan(clips)!;
		expect(common.startSeconds).toBeCloseTo(9.8, 12);
		expect(common.endSeconds).toBeCloseTo(82.8, 12);
		expect(commonSpan([clips[0], { offsetSeconds: 100, driftPpm: 0, durationSeconds: 5 }])).toBeNull();
	});

	it('ends where the last frame of a camera does, half a frame after it, as the engine\'s common span does', () => {
		// The demo's low camera: 30 fps, 2220 frames (74 s), placed at +8.798934 s and +31.07 ppm.
		const low = { offsetSeconds: 8.798934, driftPpm: 31.07, durationSeconds: 74.0, frameSpan: frameSpanSeconds({ kind: 'constant', frameRate: { num: 30, den: 1 }, firstFrameSeconds: 0, frameCount: 2220 }) };
		const span = clipSessionSpan(low);
		// Last frame at 2219/30 s; half a frame (1/60 s) later is where its frame stops being the nearest.
		expect(span.endSeconds).toBeCloseTo(8.798934 + (2219 / 30 + 1 / 60) * (1 + 31.07e-6), 9);
		expect(span.endSeconds).toBeLessThan(clipSessionSpan({ ...low, frameSpan: null }).endSeconds);
		// A trim inside the frames still decides.
		expect(clipSessionSpan({ ...low, trimEndSeconds: 60 }).endSeconds).toBeCloseTo(8.798934 + 60 * (1 + 31.07e-6), 9);
	});

	it('refuses a usable span outside the common span or backwards', () => {
		const common = commonSpan(clips);
		expect(usableSpanProblem({ startSeconds: 10, endSeconds: 80 }, common)).toBeNull();
		expect(usableSpanProblem({ startSeconds: 9, endSeconds: 80 }, common)).toMatch(/inside the common span/);
		expect(usableSpanProblem({ startSeconds: 50, endSeconds: 40 }, common)).toMatch(/end after/);
		expect(usableSpanProblem({ startSeconds: 10, endSeconds: 20 }, null)).toMatch(/no common span/);
	});

	it('keeps trims inside the clip', () => {
		expect(trimProblem({ trimStartSeconds: 1, trimEndSeconds: 70 }, 74)).toBeNull();
		expect(trimProblem({ trimStartSeconds: null, trimEndSeconds: null }, 74)).toBeNull();
		expect(trimProblem({ trimStartSeconds: -1, trimEndSeconds: null }, 74)).toMatch(/before the clip/);
		expect(trimProblem({ trimStartSeconds: 0, trimEndSeconds: 75 }, 74)).toMatch(/after the clip/);
		expect(trimProblem({ trimStartSeconds: 30, trimEndSeconds: 20 }, 74)).toMatch(/end after/);
	});
});
