import { describe, expect, it } from 'vitest';
import { gccPhat } from './gcc-phat';
import { parabolicPeakOffset, refinePeakLag, topPeaks } from './peak';
import { seededRandom } from './test-signals';

describe('parabolicPeakOffset', () => {
	it('finds the vertex of a sampled parabola exactly', () => {
		// y = −(x − 0.3)² + 2 sampled at −1, 0, 1: the closed form δ = ½(α−γ)/(α−2β+γ) (J. O. Smith) gives 0.3.
		const y = (x: number) => -((x - 0.3) ** 2) + 2;
		expect(parabolicPeakOffset(y(-1), y(0), y(1))).toBeCloseTo(0.3, 12);
		expect(parabolicPeakOffset(1, 2, 1)).toBeCloseTo(0, 12);
		expect(parabolicPeakOffset(0.5, 1, 0.9)).toBeCloseTo((0.5 * (0.5 - 0.9)) / (0.5 - 2 + 0.9), 12);
	});
});

describe('refinePeakLag', () => {
	it('removes the parabolic bias on a fractional delay of band-limited noise', () => {
		// Build b and a = b delayed by 10.37 samples exactly, by a phase shift in the DFT (shift theorem).
		const n = 4096;
		const random = seededRandom(11);
		const trueDelay = 10.37;
		const re = new Float64Array(n);
		const im = new Float64Array(n);
		const aRe = new Float64Array(n);
		const aIm = new Float64Array(n);
		for (let k = 1; k < n / 2 * 0.8; k++) {
			const phase = random() * 2 * Math.PI;
			re[k] = Math.cos(phase);
			im[k] = Math.sin(phase);
			const shift = (-2 * Math.PI * k * trueDelay) / n;
			aRe[k] = re[k] * Math.cos(shift) - im[k] * Math.sin(shift);
			aIm[k] = re[k] * Math.sin(shift) + im[k] * Math.cos(shift);
		}
		const synth = (sr: Float64Array, si: Float64Array) =>
			Array.from({ length: n }, (_, t) => {
				let v = 0;
				for (let k = 1; k < n / 2 * 0.8; k++) v += sr[k] * Math.cos((2 * Math.PI * k * t) / n) - si[k] * Math.sin((2 * Math.PI * k * t) / n);
				return v;
			});
		const b = synth(re, im);
		const a = synth(aRe, aIm);
		// Same size as the signals: the delay is circular, as constructed.
		const correlation = gccPhat(a, b, { sampleRate: n, phatExponent: 1, band: null, size: n });
		const [peak] = topPeaks(correlation, -20, 20, 1, 1);
		expect(peak.lag).toBe(10);
		const parabolic = peak.lag + parabolicPeakOffset(correlation.values[9], correlation.values[10], correlation.values[11]);
		const refined = refinePeakLag(correlation, peak);
		// The parabola is biased on a sinc-like peak (J. O. Smith: up to ~0.12 sample); the band-limited
		// Newton refinement lands on the true delay.
		expect(Math.abs(parabolic - trueDelay)).toBeGreaterThan(0.01);
		expect(Math.abs(refined - trueDelay)).toBeLessThan(1e-4);
	});
});
