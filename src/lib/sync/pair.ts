import { correlationView, defaultCorrelationViewOptions, type CorrelationView } from './correlation-view';
import { fitDrift, defaultDriftFitOptions, type DriftFitOptions } from './drift-fit';
import { nextPowerOfTwo, realSpectrum, scratchArray } from './fft';
import { gccPhat, gccPhatFromSpectra, type BandWeighting } from './gcc-phat';
import { onsetEnvelope, type OnsetEnvelope } from './onset-envelope';
import { peakToSidelobeRatio, refinePeakLag, sidelobeStatistics, topPeaks } from './peak';
import { pcmSource, type PairRelation, type PcmSource, type PcmTrack } from './types';

/** A clip ready for pairing: its PCM plus the low-rate envelope the coarse search uses. */
export interface AnalysisTrack {
	pcm: PcmSource;
	envelope: OnsetEnvelope;
	/** RMS level of the whole clip in dBFS; −Infinity for digital silence. */
	levelDb: number;
}

export interface PairOptions {
	/** Pass band for the waveform refinement (GCC-PHAT weighting). */
	band: BandWeighting;
	/** 1 = PHAT (Knapp & Carter 1976). */
	phatExponent: number;
	envelopeRate: number;
	coarseSegmentSeconds: number;
	maxCoarseSegments: number;
	windowSeconds: number;
	/** Windows may overlap; their centres are at least this far apart. */
	minWindowSpacingSeconds: number;
	/** Windows per minute of overlap, between `minWindows` and `maxWindows` (and the spacing limit). */
	windowsPerMinute: number;
	minWindows: number;
	maxWindows: number;
	/** Largest clock difference searched for, in ppm. */
	maxDriftPpm: number;
	drift: DriftFitOptions;
	/** Clips quieter than this (dBFS RMS) are treated as muted. */
	silenceDb: number;
	/** Keep the correlation around the chosen lag for people to look at (the workbench); the command line has no use for it. */
	keepCorrelationView: boolean;
}

export const defaultPairOptions: PairOptions = {
	band: { lowHz: 300, highHz: 3400 },
	phatExponent: 1,
	envelopeRate: 125,
	coarseSegmentSeconds: 30,
	maxCoarseSegments: 6,
	// 1.9 s at 8 kHz plus the search margins still fits a 16384-point transform; 2 s would need 32768.
	windowSeconds: 1.9,
	minWindowSpacingSeconds: 1,
	// A dozen windows on a lap of a minute and a half, 32 on anything over 3½ minutes: the offset of
	// a short clip is far inside its tolerance with a dozen (worst error 0.03 ms on the fixtures),
	// and long clips need the span for drift. In a fresh process every window costs a millisecond
	// or more while the JIT catches up, so a short job is mostly windows.
	windowsPerMinute: 9,
	minWindows: 12,
	maxWindows: 32,
	maxDriftPpm: 200,
	drift: defaultDriftFitOptions,
	silenceDb: -90,
	keepCorrelationView: true
};

/** One refinement window: at B time `timeSeconds`, A is `lagSeconds` ahead (timeA − timeB). */
export interface WindowMeasurement {
	timeSeconds: number;
	lagSeconds: number;
	/** PHAT peak height relative to a perfect match (0..1): the fraction of phase that agrees. */
	coherence: number;
	peakToSidelobe: number;
	inlier: boolean;
}

export interface CoarseMatch {
	lagSeconds: number;
	peakToSidelobe: number;
	/** Coarse segments whose best peaks agree with the chosen lag, of those tried. */
	supportingSegments: number;
	segments: number;
	/** Sum of the agreeing segments' peak-to-sidelobe ratios. */
	score: number;
}

export interface PairEstimate extends PairRelation {
	matched: boolean;
	/** 0..1; 0.5 is the matched/unmatched line. */
	confidence: number;
	driftMeasured: boolean;
	/** B time at the middle of the measured overlap and the offset there: the best known point. */
	referenceTimeSeconds: number;
	offsetAtReferenceSeconds: number;
	offsetStdSeconds: number;
	driftStdPpm: number;
	overlapSeconds: number;
	windows: WindowMeasurement[];
	coarse: CoarseMatch | null;
	notes: string[];
	/** The coarse correlation around the chosen lag and its runner-ups, for a person to look at. */
	correlation?: CorrelationView | null;
}

/** The envelope options pairing expects, for a caller that builds the envelope itself (a stretch at a time, say). */
export function envelopeOptions(options: Pick<PairOptions, 'envelopeRate' | 'band'>, fullScale: number) {
	return { rate: options.envelopeRate, highPassHz: options.band.lowHz, fullScale };
}

export function prepareTrack(pcm: PcmTrack, options: Pick<PairOptions, 'envelopeRate' | 'band'> = defaultPairOptions): AnalysisTrack {
	const envelope = onsetEnvelope(pcm.samples, pcm.sampleRate, pcm.startSeconds, envelopeOptions(options, pcm.fullScale ?? 1));
	return { pcm: pcmSource(pcm), envelope, levelDb: levelDbOf(envelope) };
}

export function levelDbOf(envelope: OnsetEnvelope): number {
	return envelope.rms > 0 ? 20 * Math.log10(envelope.rms) : Number.NEGATIVE_INFINITY;
}

function trackEnd(track: PcmSource): number {
	return track.startSeconds + track.length / track.sampleRate;
}

interface CoarseCandidate {
	segmentCenterSeconds: number;
	lagSeconds: number;
	peakToSidelobe: number;
}

/**
 * Coarse search over every lag at the envelope rate. Segments of the shorter clip are each
 * correlated against the whole longer one (so drift over long clips cannot smear the peak),
 * then the lag most segments agree on wins.
 */
/** Sums of `factor` consecutive envelope values: the same onsets at a fifth of the rate, say. */
function decimateEnvelope(envelope: OnsetEnvelope, factor: number): OnsetEnvelope {
	if (factor === 1) return envelope;
	const values = new Float32Array(Math.floor(envelope.values.length / factor));
	for (let i = 0; i < values.length; i++) {
		let sum = 0;
		for (let j = 0; j < factor; j++) sum += envelope.values[i * factor + j];
		values[i] = sum;
	}
	const rate = envelope.rate / factor;
	return { values, rate, startSeconds: envelope.startSeconds + (factor - 1) / envelope.rate / 2, rms: envelope.rms };
}

/**
 * Back at the full envelope rate, the lag of one agreeing segment, searched ±searchSeconds around
 * what the decimated search found (timeLong − timeShort at the short clip's `shortCenterSeconds`).
 */
function sharpenLag(long: OnsetEnvelope, short: OnsetEnvelope, shortCenterSeconds: number, longMinusShort: number, segmentSeconds: number, searchSeconds: number): number {
	const rate = long.rate;
	const shortStart = Math.max(0, Math.round((shortCenterSeconds - segmentSeconds / 2 - short.startSeconds) * rate));
	const shortEnd = Math.min(short.values.length, shortStart + Math.round(segmentSeconds * rate));
	const margin = Math.ceil(searchSeconds * rate);
	const longStart = Math.round((short.startSeconds + shortStart / rate + longMinusShort - long.startSeconds) * rate) - margin;
	const from = Math.max(0, longStart);
	const to = Math.min(long.values.length, longStart + (shortEnd - shortStart) + 2 * margin);
	if (shortEnd - shortStart < rate || to - from < shortEnd - shortStart) return longMinusShort;
	const correlation = gccPhat(long.values.subarray(from, to), short.values.subarray(shortStart, shortEnd), {
		sampleRate: rate,
		band: { lowHz: 0.5, highHz: rate * 0.35 },
		phatExponent: 1,
		scratch: true
	});
	const [peak] = topPeaks(correlation, 0, to - from - (shortEnd - shortStart), 1, 1);
	if (!peak) return longMinusShort;
	return (from + peak.lag - shortStart) / rate + long.startSeconds - short.startSeconds;
}

function coarseSearch(a: AnalysisTrack, b: AnalysisTrack, options: PairOptions): { match: CoarseMatch; support: CoarseCandidate[] }[] {
	const swap = b.envelope.values.length > a.envelope.values.length;
	const fullLong = swap ? b.envelope : a.envelope;
	const fullShort = swap ? a.envelope : b.envelope;
	// Long clips are searched at a fifth of the envelope rate with four times longer segments (drift
	// smears a 240 s segment by under 50 ms at 200 ppm, about one sample there), then sharpened.
	const factor = fullLong.values.length / fullLong.rate > 720 ? 5 : 1;
	const long = decimateEnvelope(fullLong, factor);
	const short = decimateEnvelope(fullShort, factor);
	const rate = long.rate;
	const segmentSeconds = options.coarseSegmentSeconds * (factor === 1 ? 1 : 4);
	const segmentLength = Math.min(short.values.length, Math.round(segmentSeconds * rate));
	if (segmentLength < rate * 2 || long.values.length < rate * 2) return [];
	const segmentCount = Math.min(options.maxCoarseSegments, Math.max(1, Math.ceil(short.values.length / segmentLength)));
	const size = nextPowerOfTwo(long.values.length + segmentLength - 1);
	const longSpectrum = realSpectrum(long.values, size);
	const envelopeBand: BandWeighting = { lowHz: 0.5, highHz: rate * 0.35 };
	const perSegment: CoarseCandidate[][] = [];
	for (let s = 0; s < segmentCount; s++) {
		const start = segmentCount === 1 ? 0 : Math.round((s * (short.values.length - segmentLength)) / (segmentCount - 1));
		const correlation = gccPhatFromSpectra(longSpectrum, realSpectrum(short.values, size, start, segmentLength, scratchArray('coarse-segment', 2 * size)), size, {
			sampleRate: rate,
			band: envelopeBand,
			phatExponent: 1,
			scratch: true
		});
		const minLag = -(segmentLength - 1);
		const maxLag = long.values.length - 1;
		const peaks = topPeaks(correlation, minLag, maxLag, 3, Math.round(0.05 * rate));
		// Over hundreds of thousands of lags the peaks' own neighbourhoods do not move the sidelobe
		// statistics, so one pass serves all three peaks.
		const sidelobes = peaks.length ? sidelobeStatistics(correlation, minLag, maxLag) : { mean: 0, deviation: 0 };
		const centerSeconds = short.startSeconds + (start + segmentLength / 2) / rate;
		perSegment.push(
			peaks.map((peak) => {
				// Lag k: short[start + n] sits at long[n + k]; express it as timeLong − timeShort.
				let longMinusShort = (peak.lag - start) / rate + long.startSeconds - short.startSeconds;
				if (factor > 1) longMinusShort = sharpenLag(fullLong, fullShort, centerSeconds, longMinusShort, options.coarseSegmentSeconds, 2.5 / rate);
				const lagSeconds = swap ? -longMinusShort : longMinusShort;
				const bCenter = swap ? centerSeconds + longMinusShort : centerSeconds;
				return {
					segmentCenterSeconds: bCenter,
					lagSeconds,
					peakToSidelobe: sidelobes.deviation > 0 ? (peak.value - sidelobes.mean) / sidelobes.deviation : 0
				};
			})
		);
	}
	const maxSlope = options.maxDriftPpm * 1e-6;
	const ranked: { candidate: CoarseCandidate; score: number; support: CoarseCandidate[] }[] = [];
	for (const candidates of perSegment) {
		for (const candidate of candidates) {
			let score = 0;
			const support: CoarseCandidate[] = [];
			for (const others of perSegment) {
				let bestHere: CoarseCandidate | null = null;
				for (const other of others) {
					const tolerance = 3 / rate + maxSlope * Math.abs(other.segmentCenterSeconds - candidate.segmentCenterSeconds);
					if (Math.abs(other.lagSeconds - candidate.lagSeconds) <= tolerance && (!bestHere || other.peakToSidelobe > bestHere.peakToSidelobe)) {
						bestHere = other;
					}
				}
				if (bestHere) {
					score += bestHere.peakToSidelobe;
					support.push(bestHere);
				}
			}
			ranked.push({ candidate, score, support });
		}
	}
	ranked.sort((x, y) => y.score - x.score);
	// Distinct lags only: a candidate supported by the same segments as a better one is the same answer.
	const distinct = ranked.filter((r, i) => ranked.slice(0, i).every((q) => Math.abs(q.candidate.lagSeconds - r.candidate.lagSeconds) > 0.02));
	return distinct.slice(0, 3).map((r) => ({
		match: {
			lagSeconds: r.candidate.lagSeconds,
			peakToSidelobe: r.candidate.peakToSidelobe,
			supportingSegments: r.support.length,
			segments: segmentCount,
			score: r.score
		},
		support: r.support
	}));
}

/** Predicted lag along B's timeline from the agreeing coarse segments, with its uncertainty. */
function lagPredictor(support: CoarseCandidate[], envelopeRate: number, maxDriftPpm: number) {
	const points = [...support].sort((x, y) => x.segmentCenterSeconds - y.segmentCenterSeconds);
	let slope = 0;
	if (points.length >= 2) {
		const meanX = points.reduce((s, p) => s + p.segmentCenterSeconds, 0) / points.length;
		const meanY = points.reduce((s, p) => s + p.lagSeconds, 0) / points.length;
		let sxx = 0;
		let sxy = 0;
		for (const p of points) {
			sxx += (p.segmentCenterSeconds - meanX) ** 2;
			sxy += (p.segmentCenterSeconds - meanX) * (p.lagSeconds - meanY);
		}
		if (sxx > 0 && Math.abs(sxy / sxx) <= maxDriftPpm * 1e-6) slope = sxy / sxx;
	}
	const anchor = points.reduce((best, p) => (p.peakToSidelobe > best.peakToSidelobe ? p : best), points[0]);
	const slopeUncertainty = points.length >= 2 ? 40e-6 : maxDriftPpm * 1e-6;
	return (time: number) => {
		const nearest = points.reduce((d, p) => Math.min(d, Math.abs(p.segmentCenterSeconds - time)), Number.POSITIVE_INFINITY);
		return {
			lagSeconds: anchor.lagSeconds + slope * (time - anchor.segmentCenterSeconds),
			marginSeconds: Math.min(0.5, 4 / envelopeRate + 2e-3 + slopeUncertainty * nearest)
		};
	};
}

/** Waveform GCC-PHAT in one window of B against the stretch of A where it is predicted to be. */
function measureWindow(
	a: PcmSource,
	b: PcmSource,
	centerSeconds: number,
	predicted: { lagSeconds: number; marginSeconds: number },
	options: PairOptions
): Omit<WindowMeasurement, 'inlier'> | null {
	const rate = b.sampleRate;
	const windowLength = Math.round(options.windowSeconds * rate);
	const marginSamples = Math.ceil(predicted.marginSeconds * rate);
	const bStart = Math.round((centerSeconds - options.windowSeconds / 2 - b.startSeconds) * rate);
	const aStart = Math.round((centerSeconds - options.windowSeconds / 2 + predicted.lagSeconds - a.startSeconds) * rate) - marginSamples;
	const aLength = windowLength + 2 * marginSamples;
	if (bStart < 0 || bStart + windowLength > b.length || aStart < 0 || aStart + aLength > a.length) return null;
	// Circular correlation is enough: only lags 0..2·margin are read, and A's stretch covers them
	// without wrapping, so the transform need only hold A's stretch, not both lengths added.
	const correlation = gccPhat(a.read(aStart, aLength), b.read(bStart, windowLength), {
		size: nextPowerOfTwo(aLength),
		sampleRate: rate,
		band: options.band,
		phatExponent: options.phatExponent,
		scratch: true
	});
	const [peak] = topPeaks(correlation, 0, 2 * marginSamples, 1, 1);
	if (!peak) return null;
	const lagSamples = refinePeakLag(correlation, peak);
	return {
		timeSeconds: b.startSeconds + (bStart + windowLength / 2) / rate,
		lagSeconds: (aStart + lagSamples - bStart) / rate + a.startSeconds - b.startSeconds,
		coherence: peak.value / correlation.peakScale,
		peakToSidelobe: peakToSidelobeRatio(correlation, 0, 2 * marginSamples, peak, Math.max(2, Math.round(rate * 1e-3)))
	};
}

function unmatched(note: string, coarse: CoarseMatch | null = null): PairEstimate {
	return {
		matched: false,
		confidence: 0,
		offsetSeconds: Number.NaN,
		driftPpm: 0,
		driftMeasured: false,
		referenceTimeSeconds: Number.NaN,
		offsetAtReferenceSeconds: Number.NaN,
		offsetStdSeconds: Number.POSITIVE_INFINITY,
		driftStdPpm: Number.POSITIVE_INFINITY,
		overlapSeconds: 0,
		windows: [],
		coarse,
		notes: [note]
	};
}

/**
 * Where clip B sits relative to clip A: timeA = offsetSeconds + timeB × (1 + driftPpm·1e-6).
 * Pure computation over PCM; safe to run in a worker thread.
 */
export function estimatePair(a: AnalysisTrack, b: AnalysisTrack, options: PairOptions = defaultPairOptions): PairEstimate {
	if (a.pcm.sampleRate !== b.pcm.sampleRate) throw new RangeError('both clips must be decoded at one sample rate');
	if (a.levelDb < options.silenceDb || b.levelDb < options.silenceDb) return unmatched('no sound: the microphone looks muted');
	const candidates = coarseSearch(a, b, options);
	if (candidates.length === 0) return unmatched('too short to compare');
	let best: PairEstimate | null = null;
	for (const [rank, candidate] of candidates.entries()) {
		// A runner-up lag (a footstep period away, say) is tried only when the best one fails and the
		// runner-up has real support of its own.
		if (rank > 0 && (best?.matched || candidate.match.score < 0.3 * candidates[0].match.score)) break;
		const estimate = refine(a, b, candidate, options);
		if (!best || estimate.confidence > best.confidence) best = estimate;
	}
	const estimate = best ?? unmatched('no consistent lag');
	return options.keepCorrelationView ? withCorrelationView(a, b, estimate, options) : estimate;
}

/** Adds the correlation around the lag the estimate settled on (the coarse lag when it found no match). */
function withCorrelationView(a: AnalysisTrack, b: AnalysisTrack, estimate: PairEstimate, options: PairOptions): PairEstimate {
	const bMiddle = b.pcm.startSeconds + b.pcm.length / b.pcm.sampleRate / 2;
	const coarseLag = estimate.coarse?.lagSeconds ?? Number.NaN;
	const lagAt = estimate.matched ? (t: number) => estimate.offsetSeconds + t * estimate.driftPpm * 1e-6 : () => coarseLag;
	const center = estimate.matched ? estimate.referenceTimeSeconds : bMiddle;
	const view = correlationView(a.envelope, b.envelope, lagAt, center, { ...defaultCorrelationViewOptions, segmentSeconds: options.coarseSegmentSeconds });
	return { ...estimate, correlation: view };
}

/** Waveform refinement along the overlap around one coarse lag, then the robust drift fit. */
function refine(a: AnalysisTrack, b: AnalysisTrack, coarse: { match: CoarseMatch; support: CoarseCandidate[] }, options: PairOptions): PairEstimate {
	const predict = lagPredictor(coarse.support, a.envelope.rate, options.maxDriftPpm);
	const center = predict(b.pcm.startSeconds + b.pcm.length / b.pcm.sampleRate / 2).lagSeconds;
	const overlapStart = Math.max(b.pcm.startSeconds, a.pcm.startSeconds - center);
	const overlapEnd = Math.min(trackEnd(b.pcm), trackEnd(a.pcm) - center);
	const overlapSeconds = Math.max(0, overlapEnd - overlapStart);
	const usableStart = overlapStart + options.windowSeconds / 2 + 0.05;
	const usableEnd = overlapEnd - options.windowSeconds / 2 - 0.05;
	const wanted = Math.min(options.maxWindows, Math.max(options.minWindows, Math.round((overlapSeconds / 60) * options.windowsPerMinute)));
	const windowCount = Math.min(wanted, Math.floor((usableEnd - usableStart) / options.minWindowSpacingSeconds) + 1);
	if (windowCount < 1) return unmatched('the clips barely overlap', coarse.match);

	const measured: Omit<WindowMeasurement, 'inlier'>[] = [];
	for (let i = 0; i < windowCount; i++) {
		const time = windowCount === 1 ? (usableStart + usableEnd) / 2 : usableStart + ((usableEnd - usableStart) * i) / (windowCount - 1);
		const window = measureWindow(a.pcm, b.pcm, time, predict(time), options);
		if (window) measured.push(window);
	}
	const fit = fitDrift(
		measured.map((w) => ({ x: w.timeSeconds, y: w.lagSeconds })),
		options.drift
	);
	const windows = measured.map((w, i) => ({ ...w, inlier: fit.inliers[i] }));
	const inlierFraction = windows.length ? fit.inlierCount / windows.length : 0;
	const inlierCoherence = windows.filter((w) => w.inlier).map((w) => w.coherence);
	const meanCoherence = inlierCoherence.length ? inlierCoherence.reduce((s, c) => s + c, 0) / inlierCoherence.length : 0;
	const confidence = pairConfidence(inlierFraction, fit.inlierCount, meanCoherence);
	const notes: string[] = [];
	if (confidence >= 0.5 && !fit.driftMeasured) notes.push('overlap too short to measure drift: drift set to 0');
	return {
		matched: confidence >= 0.5,
		confidence,
		offsetSeconds: fit.offsetSeconds,
		driftPpm: fit.slope * 1e6,
		driftMeasured: fit.driftMeasured,
		referenceTimeSeconds: fit.centerX,
		offsetAtReferenceSeconds: fit.offsetAtCenterSeconds,
		offsetStdSeconds: fit.offsetStdSeconds,
		driftStdPpm: fit.slopeStd * 1e6,
		overlapSeconds,
		windows,
		coarse: coarse.match,
		notes
	};
}

/**
 * Calibrated on the fixtures: a real match has most windows on one line; unrelated sound
 * puts at most a few windows on a line by chance.
 */
export function pairConfidence(inlierFraction: number, inlierCount: number, meanCoherence: number): number {
	if (inlierCount < 2) return Math.min(0.2, inlierFraction);
	const countFactor = Math.min(1, inlierCount / 4);
	const score = inlierFraction * countFactor;
	return Math.max(0, Math.min(1, score + 0.1 * Math.min(1, meanCoherence * 2)));
}
