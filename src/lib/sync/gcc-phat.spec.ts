import { describe, expect, it } from 'vitest';
import { bandWeight, gccPhat, lagValue } from './gcc-phat';
import { seededRandom } from './test-signals';

function noise(length: number, seed: number): number[] {
	const random = seededRandom(seed);
	return Array.from({ length }, () => random() * 2 - 1);
}

describe('gccPhat', () => {
	it('without weighting equals the direct cross-correlation r[k] = Σ a[n+k]·b[n] at every lag', () => {
		const a = noise(40, 1);
		const b = noise(25, 2);
		const correlation = gccPhat(a, b, { sampleRate: 1000, phatExponent: 0, band: null });
		for (let lag = -(b.length - 1); lag <= a.length - 1; lag++) {
			let direct = 0;
			for (let n = 0; n < b.length; n++) if (n + lag >= 0 && n + lag < a.length) direct += a[n + lag] * b[n];
			// Correlation theorem: zero-padded to ≥ N₁+N₂−1 there is no circular wrap (Knapp & Carter 1976).
			expect(lagValue(correlation, lag)).toBeCloseTo(direct, 9);
		}
	});

	it('with the phase transform equals a direct DFT of A·B̄/|A·B̄|, inverted directly', () => {
		const a = noise(20, 5);
		const b = noise(12, 6);
		const size = 32;
		const correlation = gccPhat(a, b, { sampleRate: 1000, phatExponent: 1, band: null, size });
		const dft = (x: number[]) =>
			Array.from({ length: size }, (_, k) => {
				let re = 0;
				let im = 0;
				x.forEach((v, n) => {
					re += v * Math.cos((2 * Math.PI * k * n) / size);
					im -= v * Math.sin((2 * Math.PI * k * n) / size);
				});
				return { re, im };
			});
		const A = dft(a);
		const B = dft(b);
		const whitened = A.map((x, k) => {
			const re = x.re * B[k].re + x.im * B[k].im;
			const im = x.im * B[k].re - x.re * B[k].im;
			const m = Math.hypot(re, im);
			return { re: re / m, im: im / m };
		});
		for (let lag = 0; lag < size; lag++) {
			let value = 0;
			whitened.forEach((w, k) => (value += w.re * Math.cos((2 * Math.PI * k * lag) / size) - w.im * Math.sin((2 * Math.PI * k * lag) / size)));
			// R(τ) = IFFT[X₁·X₂* / |X₁·X₂*|] (Knapp & Carter 1976), here by direct inverse DFT.
			expect(correlation.values[lag]).toBeCloseTo(value / size, 9);
		}
	});

	it('turns a pure delay into a single unit peak at that delay', () => {
		const b = noise(256, 9);
		const delay = 37;
		const a = [...new Array(delay).fill(0), ...b];
		const correlation = gccPhat(a, b, { sampleRate: 8000, phatExponent: 1, band: null });
		let best = 0;
		for (let i = 1; i < correlation.size; i++) if (correlation.values[i] > correlation.values[best]) best = i;
		expect(best).toBe(delay);
		// PHAT of a circularly exact delay is a delta of height 1 (Knapp & Carter 1976); zero padding
		// makes the delay non-circular, so the peak is high but not exactly 1.
		expect(correlation.values[delay] / correlation.peakScale).toBeGreaterThan(0.5);
	});

	it('gives no weight below half the low band edge, where microphones disagree', () => {
		const band = { lowHz: 300, highHz: 3400 };
		// Raised-cosine taper edges (common practice).
		expect(bandWeight(100, 4000, band)).toBe(0);
		expect(bandWeight(225, 4000, band)).toBeCloseTo(0.5, 12);
		expect(bandWeight(1000, 4000, band)).toBe(1);
		expect(bandWeight(3950, 4000, band)).toBeLessThan(0.1);
	});
});
