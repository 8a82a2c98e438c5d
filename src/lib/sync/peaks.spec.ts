import { describe, expect, it } from 'vitest';
import { bucketRange, chooseLevel, coarsenPeaks, PeakAccumulator } from './peaks';

// Checked against a direct min/max over each slice of the input (the definition of a peak pair).
function directPeaks(samples: number[], bucket: number): number[] {
	const out: number[] = [];
	for (let i = 0; i < samples.length; i += bucket) {
		const slice = samples.slice(i, i + bucket);
		out.push(Math.min(...slice), Math.max(...slice));
	}
	return out;
}

describe('peaks', () => {
	const samples = Array.from({ length: 1000 }, (_, i) => Math.fround(Math.sin(i * 0.37) * Math.cos(i * 0.011)));

	it('accumulates the min and max of every bucket, however the input is chunked', () => {
		const acc = new PeakAccumulator(64);
		for (let i = 0; i < samples.length; i += 77) acc.push(samples.slice(i, i + 77));
		expect(Array.from(acc.finish())).toEqual(directPeaks(samples, 64));
	});

	it('coarsens a level to the same peaks as accumulating with the larger bucket', () => {
		const fine = new PeakAccumulator(8);
		fine.push(samples);
		const coarse = new PeakAccumulator(64);
		coarse.push(samples);
		expect(Array.from(coarsenPeaks(fine.finish(), 8))).toEqual(Array.from(coarse.finish()));
	});

	it('picks about one bucket per pixel', () => {
		// 10 s at 48 kHz over 1000 px is 480 samples per pixel: the 64-sample level is the coarsest not above it.
		expect(chooseLevel(48000, 10, 1000)).toBe(0);
		// 600 s over 1000 px is 28 800 samples per pixel: the 4096-sample level.
		expect(chooseLevel(48000, 600, 1000)).toBe(2);
	});

	it('clamps the bucket range to the clip', () => {
		expect(bucketRange(48000, 64, 100, -1, 0.05)).toEqual({ first: 0, end: 38 });
		expect(bucketRange(48000, 64, 100, 1, 2)).toEqual({ first: 100, end: 100 });
	});
});
