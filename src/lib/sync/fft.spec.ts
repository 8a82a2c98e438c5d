import { describe, expect, it } from 'vitest';
import { fftOfSize, inverseRealSpectrum, nextPowerOfTwo, realSpectrum } from './fft';
import { seededRandom } from './test-signals';

/** Direct DFT, X_k = Σ x_n e^{−2πikn/N} (definition; O(N²)). */
function directDft(x: number[]): { re: number[]; im: number[] } {
	const n = x.length;
	const re: number[] = [];
	const im: number[] = [];
	for (let k = 0; k < n; k++) {
		let sr = 0;
		let si = 0;
		for (let t = 0; t < n; t++) {
			sr += x[t] * Math.cos((2 * Math.PI * k * t) / n);
			si -= x[t] * Math.sin((2 * Math.PI * k * t) / n);
		}
		re.push(sr);
		im.push(si);
	}
	return { re, im };
}

describe('fft.js realTransform', () => {
	it('matches a direct DFT on every bin, zero padding included', () => {
		const random = seededRandom(7);
		const signal = Array.from({ length: 50 }, () => random() * 2 - 1);
		const size = nextPowerOfTwo(signal.length);
		expect(size).toBe(64);
		const spectrum = realSpectrum(signal, size);
		fftOfSize(size).completeSpectrum(spectrum);
		const padded = [...signal, ...new Array(size - signal.length).fill(0)];
		const direct = directDft(padded);
		for (let k = 0; k < size; k++) {
			// Direct DFT by definition: agreement to rounding error.
			expect(spectrum[2 * k]).toBeCloseTo(direct.re[k], 10);
			expect(spectrum[2 * k + 1]).toBeCloseTo(direct.im[k], 10);
		}
	});

	it('inverts back to the signal', () => {
		const random = seededRandom(3);
		const signal = Array.from({ length: 128 }, () => random() - 0.5);
		const back = inverseRealSpectrum(realSpectrum(signal, 128), 128);
		// Inverse DFT of the DFT is the identity (definition).
		for (let i = 0; i < 128; i++) expect(back[i]).toBeCloseTo(signal[i], 12);
	});
});
