import { describe, expect, it } from 'vitest';
import { clipTimeOf, frameAt, frameSpanSeconds, nearestFrame, sessionTimeOf, type FrameTiming } from './frames';
import { formatRational, parseRational, rational, rationalToNumber } from './rational';

describe('rational frame rates', () => {
	it('parses ffprobe rates exactly and rejects 0/0', () => {
		expect(parseRational('30000/1001')).toEqual({ num: 30000, den: 1001 });
		expect(parseRational('60000/2002')).toEqual({ num: 30000, den: 1001 });
		expect(parseRational('0/0')).toBeNull();
		expect(formatRational(rational(50, 1))).toBe('50/1');
		// SMPTE / ATSC practice: 30000/1001 ≈ 29.97002997 fps.
		expect(rationalToNumber({ num: 30000, den: 1001 })).toBeCloseTo(29.97002997, 8);
	});
});

describe('frameAt', () => {
	it('maps session time through offset and drift to the nearest 29.97 fps frame', () => {
		const frames: FrameTiming = { kind: 'constant', frameRate: { num: 30000, den: 1001 }, firstFrameSeconds: 0, frameCount: 107892 };
		const placement = { offsetSeconds: 2.5, driftPpm: 50 };
		// DESIGN.md: clipTime = (sessionTime − offset)/(1 + drift·1e-6); 107892 frames × 1001/30000 = 3599.9964 s (REFERENCES.md).
		expect(frameTimeOfIndex(107891)).toBeCloseTo(3599.9964 - 1001 / 30000, 9);
		const session = sessionTimeOf(1000 * (1001 / 30000), placement);
		expect(clipTimeOf(session, placement)).toBeCloseTo(1000 * (1001 / 30000), 9);
		expect(frameAt(session, { placement, frames })).toBe(1000);
		expect(frameAt(session + 0.49 * (1001 / 30000), { placement, frames })).toBe(1000);
		expect(frameAt(session + 0.51 * (1001 / 30000), { placement, frames })).toBe(1001);
		expect(frameAt(2.5 - 0.1, { placement, frames })).toBeNull();
		// At 50 ppm the clock gains 30 ms over 600 s ≈ 0.9 frame at 29.97 fps (REFERENCES.md).
		const late = frameAt(2.5 + 600, { placement, frames });
		expect(late).toBe(Math.round((600 / (1 + 50e-6)) * (30000 / 1001)));
		expect(late).toBe(17981);
	});

	it('uses real timestamps for variable frame timing, never N / fps', () => {
		const frames: FrameTiming = { kind: 'variable', frameTimesSeconds: [0, 0.033, 0.07, 0.1, 0.2, 0.233] };
		expect(nearestFrame(0.15, frames)).toBe(3);
		expect(nearestFrame(0.151, frames)).toBe(4);
		expect(nearestFrame(0.06, frames)).toBe(2);
		expect(nearestFrame(0.245, frames)).toBe(5);
		expect(nearestFrame(0.3, frames)).toBeNull();
		expect(nearestFrame(-0.05, frames)).toBeNull();
	});
});

describe('frameSpanSeconds', () => {
	it('ends half a frame after the last frame, where nearestFrame stops answering', () => {
		// 30 fps, 74 s of media but the last of 2220 frames at 2219/30 s (the demo's low camera): audio runs on a frame past it.
		const frames: FrameTiming = { kind: 'constant', frameRate: { num: 30, den: 1 }, firstFrameSeconds: 0, frameCount: 2220 };
		const span = frameSpanSeconds(frames)!;
		expect(span.start).toBeCloseTo(-1 / 60, 12);
		expect(span.end).toBeCloseTo(2219 / 30 + 1 / 60, 12);
		expect(span.end).toBeLessThan(74);
		expect(nearestFrame(span.end - 1e-9, frames)).toBe(2219);
		expect(nearestFrame(span.end + 1e-6, frames)).toBeNull();
		const variable: FrameTiming = { kind: 'variable', frameTimesSeconds: [0.1, 0.133, 0.2, 0.24] };
		const variableSpan = frameSpanSeconds(variable)!;
		expect(variableSpan.start).toBeCloseTo(0.1 - 0.033 / 2, 12);
		expect(variableSpan.end).toBeCloseTo(0.24 + 0.04 / 2, 12);
		expect(nearestFrame(variableSpan.end + 1e-6, variable)).toBeNull();
		expect(frameSpanSeconds({ kind: 'variable', frameTimesSeconds: [] })).toBeNull();
	});
});

function frameTimeOfIndex(index: number): number {
	return (index * 1001) / 30000;
}
