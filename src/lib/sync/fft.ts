import FFT from 'fft.js';

const cache = new Map<number, FFT>();

export function nextPowerOfTwo(n: number): number {
	let size = 2;
	while (size < n) size *= 2;
	return size;
}

/** One fft.js instance per size: its twiddle tables are the expensive part to build. */
export function fftOfSize(size: number): FFT {
	let fft = cache.get(size);
	if (!fft) {
		fft = new FFT(size);
		if (cache.size > 8) cache.clear();
		cache.set(size, fft);
	}
	return fft;
}

/**
 * Spectrum of a real signal zero-padded to `size` (a power of two), as interleaved
 * re/im pairs. Only bins 0..size/2 are filled; the rest is the conjugate mirror.
 */
export function realSpectrum(signal: ArrayLike<number>, size: number, offset = 0, length = signal.length - offset): Float64Array {
	const input = new Float64Array(size);
	const n = Math.min(length, size);
	for (let i = 0; i < n; i++) input[i] = signal[offset + i];
	const out = new Float64Array(2 * size);
	fftOfSize(size).realTransform(out, input);
	return out;
}

/**
 * Real inverse of a Hermitian half spectrum (bins 0..size/2 in interleaved form):
 * mirrors the negative frequencies and runs fft.js' normalised inverse transform.
 */
export function inverseRealSpectrum(halfSpectrum: Float64Array, size: number): Float64Array {
	const full = halfSpectrum.length === 2 * size ? halfSpectrum : new Float64Array(2 * size);
	if (full !== halfSpectrum) full.set(halfSpectrum.subarray(0, size + 2));
	const fft = fftOfSize(size);
	fft.completeSpectrum(full);
	const complexOut = new Float64Array(2 * size);
	fft.inverseTransform(complexOut, full);
	const out = new Float64Array(size);
	for (let i = 0; i < size; i++) out[i] = complexOut[2 * i];
	return out;
}
