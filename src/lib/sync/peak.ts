import { lagValue, type CrossCorrelation } from './gcc-phat';

export interface CorrelationPeak {
	/** Integer lag in samples. */
	lag: number;
	value: number;
}

/**
 * Vertex of the parabola through three equally spaced samples around a peak β:
 * δ = ½(α − γ)/(α − 2β + γ), in samples relative to β (J. O. Smith, Spectral Audio Signal Processing).
 */
export function parabolicPeakOffset(alpha: number, beta: number, gamma: number): number {
	const denominator = alpha - 2 * beta + gamma;
	if (denominator >= 0) return 0;
	const delta = (0.5 * (alpha - gamma)) / denominator;
	return Math.max(-0.5, Math.min(0.5, delta));
}

/** The highest local maxima with lags in [minLag, maxLag], at least `separation` samples apart. */
export function topPeaks(
	correlation: CrossCorrelation,
	minLag: number,
	maxLag: number,
	count: number,
	separation: number
): CorrelationPeak[] {
	// Keep only the strongest local maxima while scanning (sorted, descending), enough for the
	// separation rule below to still find `count` distinct peaks.
	const keep = 16 * count;
	const best: CorrelationPeak[] = [];
	const { values, size } = correlation;
	const wrap = (lag: number) => ((lag % size) + size) % size;
	let previous = values[wrap(minLag - 1)];
	let index = wrap(minLag);
	let current = values[index];
	for (let lag = minLag; lag <= maxLag; lag++) {
		const nextIndex = index + 1 === size ? 0 : index + 1;
		const next = values[nextIndex];
		if (current > 0 && current >= previous && current > next && (best.length < keep || current > best[best.length - 1].value)) {
			let at = best.length < keep ? best.length : keep - 1;
			while (at > 0 && best[at - 1].value < current) at--;
			best.splice(at, 0, { lag, value: current });
			if (best.length > keep) best.pop();
		}
		previous = current;
		current = next;
		index = nextIndex;
	}
	const candidates = best;
	const chosen: CorrelationPeak[] = [];
	for (const candidate of candidates) {
		if (chosen.every((c) => Math.abs(c.lag - candidate.lag) >= separation)) chosen.push(candidate);
		if (chosen.length === count) break;
	}
	return chosen;
}

/**
 * Peak-to-sidelobe ratio (Bolme et al. 2010): how many standard deviations the peak stands above
 * the correlation outside ±exclusion samples around it, within the searched lags.
 */
export function peakToSidelobeRatio(
	correlation: CrossCorrelation,
	minLag: number,
	maxLag: number,
	peak: CorrelationPeak,
	exclusion: number
): number {
	let sum = 0;
	let sumSquares = 0;
	let n = 0;
	const { values, size } = correlation;
	for (let lag = minLag; lag <= maxLag; lag++) {
		if (lag >= peak.lag - exclusion && lag <= peak.lag + exclusion) continue;
		const v = values[lag >= 0 ? lag % size : (lag % size) + size];
		sum += v;
		sumSquares += v * v;
		n++;
	}
	if (n < 2) return 0;
	const mean = sum / n;
	const deviation = Math.sqrt(Math.max(sumSquares / n - mean * mean, 0));
	if (deviation === 0) return peak.value > mean ? Number.POSITIVE_INFINITY : 0;
	return (peak.value - mean) / deviation;
}

/** Mean and standard deviation of the correlation over a lag range. */
export function sidelobeStatistics(correlation: CrossCorrelation, minLag: number, maxLag: number): { mean: number; deviation: number } {
	const { values, size } = correlation;
	let sum = 0;
	let sumSquares = 0;
	for (let lag = minLag; lag <= maxLag; lag++) {
		const v = values[lag >= 0 ? lag % size : (lag % size) + size];
		sum += v;
		sumSquares += v * v;
	}
	const n = Math.max(maxLag - minLag + 1, 1);
	const mean = sum / n;
	return { mean, deviation: Math.sqrt(Math.max(sumSquares / n - mean * mean, 0)) };
}

/**
 * Sub-sample peak: parabolic interpolation first, then Newton steps on the band-limited
 * correlation evaluated exactly from its spectrum, which removes the parabola's bias
 * (up to ~0.12 sample for white, critically sampled signals; J. O. Smith).
 */
export function refinePeakLag(correlation: CrossCorrelation, peak: CorrelationPeak): number {
	const alpha = lagValue(correlation, peak.lag - 1);
	const gamma = lagValue(correlation, peak.lag + 1);
	let tau = peak.lag + parabolicPeakOffset(alpha, peak.value, gamma);
	for (let iteration = 0; iteration < 6; iteration++) {
		const { first, second } = correlationDerivatives(correlation, tau);
		if (!(second < 0)) break;
		const step = -first / second;
		if (!Number.isFinite(step) || Math.abs(step) > 0.75) break;
		tau += step;
		if (Math.abs(step) < 1e-7) break;
	}
	if (Math.abs(tau - peak.lag) > 1) return peak.lag + parabolicPeakOffset(alpha, peak.value, gamma);
	return tau;
}

/** First and second derivative of the band-limited correlation at a fractional lag τ (samples). */
export function correlationDerivatives(correlation: CrossCorrelation, tau: number): { value: number; first: number; second: number } {
	const { size, weightedSpectrum } = correlation;
	const half = size / 2;
	const omega = (2 * Math.PI) / size;
	const stepRe = Math.cos(omega * tau);
	const stepIm = Math.sin(omega * tau);
	let rotRe = 1;
	let rotIm = 0;
	let value = 0;
	let first = 0;
	let second = 0;
	for (let k = 0; k <= half; k++) {
		const re = weightedSpectrum[2 * k];
		const im = weightedSpectrum[2 * k + 1];
		if (re !== 0 || im !== 0) {
			const scale = k === 0 || k === half ? 1 : 2;
			const w = omega * k;
			// Re(R·e^{iωτ}) and its derivatives in τ.
			const real = re * rotRe - im * rotIm;
			const imaginary = re * rotIm + im * rotRe;
			value += scale * real;
			first -= scale * w * imaginary;
			second -= scale * w * w * real;
		}
		const nextRe = rotRe * stepRe - rotIm * stepIm;
		rotIm = rotRe * stepIm + rotIm * stepRe;
		rotRe = nextRe;
	}
	return { value: value / size, first: first / size, second: second / size };
}
