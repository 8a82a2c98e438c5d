import Timecode from 'smpte-timecode';
import { describe, expect, it } from 'vitest';
import { frameTimeSeconds, nearestFrame, type FrameTiming } from './frames';
import type { Rational } from './rational';
import { frameCountAtSeconds, framesOfTimecode, isDropFrameRate, secondsOfFrameCount, timecodeOfFrame } from './timecode';

const NTSC30: Rational = { num: 30000, den: 1001 };
const NTSC60: Rational = { num: 60000, den: 1001 };
const FILM: Rational = { num: 24000, den: 1001 };

describe('SMPTE ST 12-1 drop-frame labels', () => {
	// Check values from shared/REFERENCES.md (computed there from the ST 12-1 drop rule).
	const checks: [Rational, number, string][] = [
		[NTSC30, 1799, '00:00:59;29'],
		[NTSC30, 1800, '00:01:00;02'],
		[NTSC30, 17982, '00:10:00;00'],
		[NTSC30, 107892, '01:00:00;00'],
		[NTSC30, 1084319, '10:03:00;05'],
		[NTSC60, 3600, '00:01:00;04'],
		[NTSC60, 35964, '00:10:00;00'],
		[NTSC60, 1084319, '05:01:30;03']
	];
	for (const [rate, frames, label] of checks) {
		it(`${rate.num}/${rate.den}: frame ${frames} is ${label} and back`, () => {
			expect(timecodeOfFrame(frames, rate)).toBe(label);
			expect(framesOfTimecode(label, rate)).toBe(frames);
		});
	}

	it('skips the dropped labels and keeps them in minutes divisible by ten', () => {
		// ST 12-1 rule (REFERENCES.md): 00 and 01 skipped at 30000/1001, 00–03 at 60000/1001.
		expect(framesOfTimecode('00:01:00;00', NTSC30)).toBeNull();
		expect(framesOfTimecode('00:01:00;01', NTSC30)).toBeNull();
		expect(framesOfTimecode('00:01:00;03', NTSC60)).toBeNull();
		expect(framesOfTimecode('00:10:00;00', NTSC30)).toBe(17982);
		// 108 labels an hour are skipped at 30000/1001: 108000 − 108 = 107892 (REFERENCES.md).
		expect(framesOfTimecode('01:00:00;00', NTSC30)).toBe(108000 - 108);
	});

	it('uses drop-frame only at 30000/1001 and 60000/1001, never at 24000/1001', () => {
		// REFERENCES.md: the standard defines drop-frame for the 30 and 60 families only.
		expect(isDropFrameRate(NTSC30)).toBe(true);
		expect(isDropFrameRate(NTSC60)).toBe(true);
		expect(isDropFrameRate(FILM)).toBe(false);
		expect(isDropFrameRate({ num: 30, den: 1 })).toBe(false);
		expect(timecodeOfFrame(86400, FILM)).toBe('01:00:00:00');
		expect(() => timecodeOfFrame(1, FILM, { dropFrame: true })).toThrow(RangeError);
		expect(timecodeOfFrame(1800, { num: 30, den: 1 })).toBe('00:01:00:00');
		expect(timecodeOfFrame(4100, { num: 50, den: 1 })).toBe('00:01:22:00');
	});

	it('adds an embedded start time code and wraps after 24 hours', () => {
		const start = framesOfTimecode('10:00:00;00', NTSC30)!;
		expect(timecodeOfFrame(1800, NTSC30, { startFrames: start })).toBe('10:01:00;02');
		// One day of 25 fps labels (common practice: time code is a 24-hour clock).
		expect(timecodeOfFrame(25 * 86400 + 3, { num: 25, den: 1 })).toBe('00:00:00:03');
		expect(framesOfTimecode('01:00:00:00', { num: 25, den: 1 })).toBe(90000);
		expect(framesOfTimecode('not a code', NTSC30)).toBeNull();
		expect(framesOfTimecode('00:00:00:30', { num: 30, den: 1 })).toBeNull();
	});
});

describe('cross-check with the smpte-timecode package', () => {
	// General-purpose reference library (npm smpte-timecode 1.3.6), over many frame counts of each rate.
	const cases: [string, Rational, boolean][] = [
		['30000/1001 drop-frame', NTSC30, true],
		['60000/1001 drop-frame', NTSC60, true],
		['24000/1001', FILM, false],
		['25/1', { num: 25, den: 1 }, false],
		['30/1', { num: 30, den: 1 }, false],
		['50/1', { num: 50, den: 1 }, false]
	];
	for (const [name, rate, drop] of cases) {
		it(`agrees at ${name}`, () => {
			const perDay = Math.round(rate.num / rate.den) * 86400 - (drop ? (144 * 9 * Math.round(rate.num / rate.den)) / 15 : 0);
			const counts = new Set<number>();
			for (let f = 0; f < 20000; f++) counts.add(f);
			// Every minute and ten-minute boundary ± 5 frames over 24 h, and a pseudo-random spread.
			const fps = Math.round(rate.num / rate.den);
			for (let minute = 0; minute < 1440; minute++) {
				const base = framesOfTimecode(`${String(Math.floor(minute / 60)).padStart(2, '0')}:${String(minute % 60).padStart(2, '0')}:00${drop ? ';' : ':'}${drop && minute % 10 ? String(fps / 15).padStart(2, '0') : '00'}`, rate, drop)!;
				for (let d = -5; d <= 5; d++) if (base + d >= 0 && base + d < perDay) counts.add(base + d);
			}
			let seed = 12345;
			for (let i = 0; i < 20000; i++) {
				seed = (seed * 1103515245 + 12345) % 2147483648;
				counts.add(seed % perDay);
			}
			let mismatches = 0;
			for (const f of counts) {
				const theirs = Timecode(f, [rate.num, rate.den], drop).toString();
				if (timecodeOfFrame(f, rate, { dropFrame: drop }) !== theirs) mismatches++;
				if (framesOfTimecode(theirs, rate, drop) !== f) mismatches++;
			}
			expect(counts.size).toBeGreaterThan(40000);
			expect(mismatches).toBe(0);
		});
	}
});

describe('frame arithmetic over a 10-hour span', () => {
	// Rates are exact rationals (SMPTE / ATSC practice, REFERENCES.md); frame n is at n × den / num seconds.
	for (const rate of [FILM, NTSC30, NTSC60]) {
		it(`${rate.num}/${rate.den}: no creep after 10 hours`, () => {
			const tenHours = Math.ceil((10 * 3600 * rate.num) / rate.den);
			const frames: FrameTiming = { kind: 'constant', frameRate: rate, firstFrameSeconds: 0, frameCount: tenHours + 1 };
			let accumulated = 0;
			let worstNaive = 0;
			let wrongFrames = 0;
			let wrongLabels = 0;
			for (let n = 0; n <= tenHours; n++) {
				const exact = frameTimeSeconds(n, frames);
				// The naive running sum shows what this test guards against.
				worstNaive = Math.max(worstNaive, Math.abs(accumulated - exact));
				accumulated += rate.den / rate.num;
				if (nearestFrame(exact, frames) !== n || frameCountAtSeconds(exact, rate) !== n) wrongFrames++;
				if (n % 997 === 0 && framesOfTimecode(timecodeOfFrame(n, rate), rate) !== n) wrongLabels++;
			}
			expect(wrongFrames).toBe(0);
			expect(wrongLabels).toBe(0);
			// The last frame time equals the rational value to within a double's rounding (computed).
			expect(Math.abs(secondsOfFrameCount(tenHours, rate) - (tenHours * rate.den) / rate.num)).toBe(0);
			expect(worstNaive).toBeGreaterThan(1e-9);
		});
	}

	it('107892 frames at 30000/1001 last 3599.9964 s: drop-frame is not wall time', () => {
		// REFERENCES.md (computed): 107892 × 1001/30000 = 3599.9964 s, labelled 01:00:00;00.
		expect(secondsOfFrameCount(107892, NTSC30)).toBeCloseTo(3599.9964, 10);
		expect(timecodeOfFrame(107892, NTSC30)).toBe('01:00:00;00');
	});
});
