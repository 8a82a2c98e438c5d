import { nextPowerOfTwo, realSpectrum, inverseRealSpectrum, scratchArray } from './fft';

/**
 * Which part of the spectrum may decide a delay. Microphones disagree below a few hundred
 * hertz (wind rumble, handling), so those bins get no weight; the edges are raised-cosine
 * tapers so the correlation peak has no ringing from a brick-wall cut.
 */
export interface BandWeighting {
	/** Weight reaches 1 at this frequency, rising from 0 at half of it. */
	lowHz: number;
	/** Weight is 1 up to this frequency, falling to 0 at 1.25× (or at Nyquist). */
	highHz: number;
}

export interface GccPhatOptions {
	sampleRate: number;
	/** 1 is the phase transform of Knapp & Carter; 0 is plain cross-correlation; between is partial whitening. */
	phatExponent?: number;
	band?: BandWeighting | null;
	/** FFT size; defaults to the next power of two ≥ a.length + b.length − 1 (no circular wrap). */
	size?: number;
	/**
	 * Build the result in work arrays kept between calls (see `scratchArray`): for a caller that
	 * reads the correlation at once and lets it go, as the refinement does for every window.
	 * The next such call overwrites it.
	 */
	scratch?: boolean;
}

/**
 * r[k] = Σₙ a[n+k]·b[n] after spectral weighting, so a peak at lag k > 0 means the content of b
 * appears k samples later in a. Stored circularly: lag k at index k, lag −k at index size − k.
 */
export interface CrossCorrelation {
	size: number;
	values: Float64Array;
	/** The weighted cross spectrum A·B̄·w (bins 0..size/2, interleaved re/im) that `values` is the inverse of. */
	weightedSpectrum: Float64Array;
	/** Sum of weights that were applied, for normalisation: a perfect PHAT match peaks at weightSum·2/size. */
	peakScale: number;
}

export function bandWeight(frequencyHz: number, nyquistHz: number, band: BandWeighting): number {
	if (frequencyHz <= 0 || frequencyHz >= nyquistHz) return 0;
	const lowStart = band.lowHz / 2;
	const highEnd = Math.min(band.highHz * 1.25, nyquistHz);
	if (frequencyHz <= lowStart || frequencyHz >= highEnd) return 0;
	if (frequencyHz < band.lowHz) return 0.5 - 0.5 * Math.cos((Math.PI * (frequencyHz - lowStart)) / (band.lowHz - lowStart));
	if (frequencyHz > band.highHz) {
		return 0.5 + 0.5 * Math.cos((Math.PI * (frequencyHz - band.highHz)) / (highEnd - band.highHz));
	}
	return 1;
}

export function lagValue(correlation: CrossCorrelation, lag: number): number {
	const { size, values } = correlation;
	return values[((lag % size) + size) % size];
}

const weightCache = new Map<string, Float64Array>();

/** Band weight of every bin 0..size/2 (cached: the same few sizes recur for every window). */
function bandWeights(size: number, sampleRate: number, band: BandWeighting | null | undefined): Float64Array | null {
	if (!band) return null;
	const key = `${size}:${sampleRate}:${band.lowHz}:${band.highHz}`;
	let weights = weightCache.get(key);
	if (!weights) {
		weights = new Float64Array(size / 2 + 1);
		for (let k = 0; k <= size / 2; k++) weights[k] = bandWeight((k * sampleRate) / size, sampleRate / 2, band);
		if (weightCache.size > 32) weightCache.clear();
		weightCache.set(key, weights);
	}
	return weights;
}

/** Weighted cross-correlation from two half spectra of the same size. */
export function gccPhatFromSpectra(
	spectrumA: Float64Array,
	spectrumB: Float64Array,
	size: number,
	options: GccPhatOptions
): CrossCorrelation {
	const exponent = options.phatExponent ?? 1;
	const half = size / 2;
	const weights = bandWeights(size, options.sampleRate, options.band);
	const weighted = options.scratch ? scratchArray('gcc-weighted', size + 2).fill(0) : new Float64Array(size + 2);
	let maxPower = 0;
	for (let k = 0; k <= half; k++) {
		if (weights && weights[k] === 0) continue;
		const ar = spectrumA[2 * k];
		const ai = spectrumA[2 * k + 1];
		const br = spectrumB[2 * k];
		const bi = spectrumB[2 * k + 1];
		const re = ar * br + ai * bi;
		const im = ai * br - ar * bi;
		weighted[2 * k] = re;
		weighted[2 * k + 1] = im;
		const power = re * re + im * im;
		if (power > maxPower) maxPower = power;
	}
	// Guard the division: bins with (numerically) no energy in either signal carry no phase.
	const floor = maxPower * 1e-24;
	let weightSum = 0;
	for (let k = 0; k <= half; k++) {
		const band = weights ? weights[k] : 1;
		if (band === 0) continue;
		weightSum += band * (k === 0 || k === half ? 1 : 2);
		const re = weighted[2 * k];
		const im = weighted[2 * k + 1];
		const power = re * re + im * im;
		let w = 0;
		if (power > floor) w = exponent === 0 ? band : exponent === 1 ? band / Math.sqrt(power) : band / Math.pow(power, exponent / 2);
		weighted[2 * k] = re * w;
		weighted[2 * k + 1] = im * w;
	}
	const values = inverseRealSpectrum(weighted, size, options.scratch ? scratchArray('gcc-values', size) : undefined);
	return { size, values, weightedSpectrum: weighted, peakScale: weightSum / size };
}

/** Generalised cross-correlation with phase transform (Knapp & Carter 1976), zero-padded, via fft.js. */
export function gccPhat(a: ArrayLike<number>, b: ArrayLike<number>, options: GccPhatOptions): CrossCorrelation {
	const size = options.size ?? nextPowerOfTwo(a.length + b.length - 1);
	const spectrumA = realSpectrum(a, size, 0, a.length, options.scratch ? scratchArray('gcc-a', 2 * size) : undefined);
	const spectrumB = realSpectrum(b, size, 0, b.length, options.scratch ? scratchArray('gcc-b', 2 * size) : undefined);
	return gccPhatFromSpectra(spectrumA, spectrumB, size, options);
}
