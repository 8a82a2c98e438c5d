import { describe, expect, it } from 'vitest';
import { correlationView, defaultCorrelationViewOptions } from './correlation-view';
import type { OnsetEnvelope } from './onset-envelope';
import { seededRandom } from './test-signals';

const rate = 125;

function envelope(values: Float32Array): OnsetEnvelope {
	return { values, rate, startSeconds: 0, rms: 1 };
}

/** Sparse onsets: what an onset envelope of speech and steps looks like. */
function onsets(seconds: number, seed: number): Float32Array {
	const random = seededRandom(seed);
	const values = new Float32Array(Math.round(seconds * rate));
	for (let i = 0; i < values.length; i++) if (random() < 0.08) values[i] = 0.2 + random();
	return values;
}

/** A's envelope holding copies of B at the given lags (seconds), each with its weight, over faint noise of its own. */
function aHolding(b: Float32Array, seconds: number, copies: { lagSeconds: number; weight: number }[]): Float32Array {
	const random = seededRandom(99);
	const a = new Float32Array(Math.round(seconds * rate));
	for (let i = 0; i < a.length; i++) a[i] = 0.01 * random();
	for (const copy of copies) {
		const at = Math.round(copy.lagSeconds * rate);
		for (let n = 0; n < b.length; n++) a[at + n] += copy.weight * b[n];
	}
	return a;
}

describe('correlationView', () => {
	it('finds the weaker copies as runner-ups, strongest first, and puts the chosen lag at 1 in the middle of the slice', () => {
		const b = onsets(60, 7);
		// Constructed truth: B sits in A at 100 s, with weaker copies at 31.2 s, 180.4 s and 101.5 s.
		const copies = [
			{ lagSeconds: 100, weight: 1 },
			{ lagSeconds: 31.2, weight: 0.6 },
			{ lagSeconds: 180.4, weight: 0.4 },
			{ lagSeconds: 101.5, weight: 0.25 }
		];
		const view = correlationView(envelope(aHolding(b, 300, copies)), envelope(b), () => 100, 30)!;
		expect(view.chosenLagSeconds).toBe(100);
		expect(view.runnersUp.map((r) => r.lagSeconds)).toEqual([31.2, 180.4, 101.5].map((s) => expect.closeTo(s, 2)));
		for (const [i, r] of view.runnersUp.entries()) {
			expect(Math.abs(r.lagSeconds - copies[i + 1].lagSeconds)).toBeLessThanOrEqual(1 / rate);
			expect(r.relativeHeight).toBeLessThan(i === 0 ? 1 : view.runnersUp[i - 1].relativeHeight);
			expect(r.relativeHeight).toBeGreaterThan(0.05);
		}
		// ±2 s at 125 values a second: 501 values, no thinning under the 512-point limit (constructed).
		expect(view.values.length).toBe(501);
		expect(view.stepSeconds).toBe(1 / rate);
		expect(view.startLagSeconds).toBeCloseTo(98, 9);
		expect(view.values[250]).toBe(1);
		expect(Math.max(...view.values)).toBe(1);
		// The runner-up 1.5 s away lies inside the slice, at the height reported for it.
		const inside = view.runnersUp[2];
		const index = Math.round((inside.lagSeconds - view.startLagSeconds) / view.stepSeconds);
		expect(view.values[index]).toBeCloseTo(inside.relativeHeight, 3);
	});

	it('looks for runner-ups within two minutes of the chosen lag in a long clip, and places them right', () => {
		const b = onsets(60, 17);
		// Constructed: B at 500 s in 15 minutes of A; a weaker copy at 470.6 s (30 s away, searched) and a
		// stronger-than-it one at 800 s (300 s away, beyond the ±120 s searched, so never reported).
		const a = aHolding(b, 900, [
			{ lagSeconds: 500, weight: 1 },
			{ lagSeconds: 470.6, weight: 0.5 },
			{ lagSeconds: 800, weight: 0.8 }
		]);
		const view = correlationView(envelope(a), envelope(b), () => 500, 30)!;
		expect(view.values[250]).toBe(1);
		expect(view.startLagSeconds).toBeCloseTo(498, 9);
		expect(view.runnersUp[0].lagSeconds).toBeCloseTo(470.6, 2);
		expect(view.runnersUp.every((r) => Math.abs(r.lagSeconds - 500) <= 120 + 60)).toBe(true);
		expect(view.runnersUp.some((r) => Math.abs(r.lagSeconds - 800) < 1)).toBe(false);
	});

	it('reports two equal copies as equally high (the phase transform of a symmetric pair is symmetric)', () => {
		const b = onsets(60, 11);
		const a = aHolding(b, 240, [
			{ lagSeconds: 40, weight: 1 },
			{ lagSeconds: 150, weight: 1 }
		]);
		const view = correlationView(envelope(a), envelope(b), () => 40, 30)!;
		expect(view.runnersUp[0].lagSeconds).toBeCloseTo(150, 6);
		expect(view.runnersUp[0].relativeHeight).toBeCloseTo(1, 2);
	});

	it('thins a long slice to the point limit, keeping the chosen peak', () => {
		const b = onsets(60, 13);
		const a = aHolding(b, 200, [{ lagSeconds: 70, weight: 1 }]);
		const view = correlationView(envelope(a), envelope(b), () => 70, 30, { ...defaultCorrelationViewOptions, halfWidthSeconds: 8 })!;
		// 16 s × 125 + 1 = 2001 lags in steps of ⌈2001/512⌉ = 4: 501 points (computed).
		expect(view.stepSeconds).toBeCloseTo(4 / rate, 12);
		expect(view.values.length).toBe(501);
		expect(Math.max(...view.values)).toBe(1);
	});

	it('has nothing to show for an envelope under a second long or a lag outside the searched range', () => {
		const b = onsets(60, 17);
		expect(correlationView(envelope(onsets(0.5, 3)), envelope(b), () => 0, 30)).toBeNull();
		expect(correlationView(envelope(aHolding(b, 100, [{ lagSeconds: 10, weight: 1 }])), envelope(b), () => 500, 30)).toBeNull();
		expect(correlationView(envelope(aHolding(b, 100, [{ lagSeconds: 10, weight: 1 }])), envelope(b), () => Number.NaN, 30)).toBeNull();
	});
});
