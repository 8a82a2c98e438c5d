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
 * A named work array, kept between calls: a window's transforms need about a megabyte of arrays,
 * and fresh memory is what costs here (a page fault for every 4 KB the first time it is written).
 * What a caller gets is overwritten by the next call asking for the same name and length.
 */
const scratchArrays = new Map<string, Float64Array>();

export function scratchArray(name: string, length: number): Float64Array {
	const key = `${name}:${length}`;
	let array = scratchArrays.get(key);
	if (!array) {
		if (scratchArrays.size > 32) scratchArrays.clear();
		array = new Float64Array(length);
		scratchArrays.set(key, array);
	}
	return array;
}

/**
 * Spectrum of a real signal zero-padded to `size` (a power of two), as interleaved
 * re/im pairs. Only bins 0..size/2 are filled; the rest is the conjugate mirror.
 */
export function realSpectrum(
	signal: ArrayLike<number>,
	size: number,
	offset = 0,
	length = signal.length - offset,
	out: Float64Array = new Float64Array(2 * size)
): Float64Array {
	const input = scratchArray('spectrum-input', size);
	const n = Math.min(length, size);
	for (let i = 0; i < n; i++) input[i] = signal[offset + i];
	input.fill(0, n);
	fftOfSize(size).realTransform(out, input);
	return out;
}

/**
 * Real inverse of a Hermitian half spectrum (bins 0..size/2, interleaved re/im), through one
 * complex inverse FFT of half the size: with M = size/2, E_k = (X_k + X̄_{M−k})/2 and
 * O_k = (X_k − X̄_{M−k})·e^{2πik/size}/2 are the spectra of the even and odd samples, and the
 * inverse of E + iO interleaves them (the standard packing of two real sequences in one complex one).
 */
const twiddleCache = new Map<number, Float64Array>();

/** cos and sin of 2πk/size for k < size/2, interleaved: the same few sizes recur for every window. */
function twiddles(size: number): Float64Array {
	let table = twiddleCache.get(size);
	if (!table) {
		table = new Float64Array(size);
		for (let k = 0; k < size / 2; k++) {
			const angle = (2 * Math.PI * k) / size;
			table[2 * k] = Math.cos(angle);
			table[2 * k + 1] = Math.sin(angle);
		}
		if (twiddleCache.size > 8) twiddleCache.clear();
		twiddleCache.set(size, table);
	}
	return table;
}

export function inverseRealSpectrum(halfSpectrum: Float64Array, size: number, out: Float64Array = new Float64Array(size)): Float64Array {
	const m = size / 2;
	const packed = scratchArray('inverse-packed', 2 * m);
	const table = twiddles(size);
	for (let k = 0; k < m; k++) {
		const xr = halfSpectrum[2 * k];
		const xi = halfSpectrum[2 * k + 1];
		const yr = halfSpectrum[2 * (m - k)];
		const yi = -halfSpectrum[2 * (m - k) + 1];
		const er = 0.5 * (xr + yr);
		const ei = 0.5 * (xi + yi);
		const dr = 0.5 * (xr - yr);
		const di = 0.5 * (xi - yi);
		const c = table[2 * k];
		const s = table[2 * k + 1];
		const or = dr * c - di * s;
		const oi = dr * s + di * c;
		packed[2 * k] = er - oi;
		packed[2 * k + 1] = ei + or;
	}
	fftOfSize(m).inverseTransform(out, packed);
	return out;
}
