import { gccPhat, lagValue } from './gcc-phat';
import type { OnsetEnvelope } from './onset-envelope';
import { topPeaks } from './peak';

/*
 * What a person needs to judge a pair by eye: the coarse (onset-envelope) correlation around
 * the lag the engine chose, and the strongest other lags it could have chosen. Computed once,
 * after the estimate, from one segment of B against the whole of A, so it costs one
 * correlation per pair and leaves the estimate itself untouched.
 */

export interface RunnerUpPeak {
	/** timeA − timeB at the segment's middle, seconds. */
	lagSeconds: number;
	/** Peak height over the chosen peak's height (above 1: this segment alone preferred it). */
	relativeHeight: number;
}

export interface CorrelationView {
	/** B time at the middle of the correlated segment, and its length. */
	segmentCenterSeconds: number;
	segmentSeconds: number;
	/** The lag the estimate puts at the segment's middle (timeA − timeB, seconds). */
	chosenLagSeconds: number;
	/** Lag of values[0]; values follow every stepSeconds. */
	startLagSeconds: number;
	stepSeconds: number;
	/** The correlation over the chosen peak's height, so the chosen peak is at 1. */
	values: number[];
	/** The strongest other peaks within `searchSeconds` of the chosen lag, strongest first. */
	runnersUp: RunnerUpPeak[];
}

export interface CorrelationViewOptions {
	segmentSeconds: number;
	/** The slice spans the chosen lag ± this. */
	halfWidthSeconds: number;
	/** Longer slices are thinned to this many points, keeping each stretch's extreme. */
	maxPoints: number;
	runnersUp: number;
	/** Runner-ups lie at least this far from the chosen lag and from each other: the main lobe of an onset envelope is about this wide. */
	separationSeconds: number;
	/** Lags searched for runner-ups: the chosen one ± this. */
	searchSeconds: number;
}

export const defaultCorrelationViewOptions: CorrelationViewOptions = {
	segmentSeconds: 60,
	halfWidthSeconds: 2,
	maxPoints: 512,
	runnersUp: 3,
	separationSeconds: 0.1,
	searchSeconds: 120
};

/**
 * The correlation of B's envelope (one segment around `centerSeconds`, B time) against A's,
 * around the lag `lagAt(centerSeconds)`; null when there is nothing to correlate.
 */
export function correlationView(
	a: OnsetEnvelope,
	b: OnsetEnvelope,
	lagAt: (bSeconds: number) => number,
	centerSeconds: number,
	options: CorrelationViewOptions = defaultCorrelationViewOptions
): CorrelationView | null {
	const rate = a.rate;
	if (b.rate !== rate) throw new RangeError('both envelopes must have one rate');
	const length = Math.min(b.values.length, Math.round(options.segmentSeconds * rate));
	if (length < rate || a.values.length < rate) return null;
	const wantedStart = Math.round((centerSeconds - b.startSeconds) * rate - length / 2);
	const segmentStart = Math.max(0, Math.min(b.values.length - length, wantedStart));
	const segmentCenterSeconds = b.startSeconds + (segmentStart + length / 2) / rate;
	const chosenLagSeconds = lagAt(segmentCenterSeconds);
	if (!Number.isFinite(chosenLagSeconds)) return null;

	// Lag k: b[segmentStart + n] sits at a[n + k], so timeA − timeB = (k − segmentStart)/rate + a.start − b.start.
	const lagOf = (k: number) => (k - segmentStart) / rate + a.startSeconds - b.startSeconds;
	const indexOf = (lagSeconds: number) => Math.round((lagSeconds - a.startSeconds + b.startSeconds) * rate) + segmentStart;
	const chosen = indexOf(chosenLagSeconds);
	// Only A's stretch within `searchSeconds` of where the segment lands is correlated: the lags a
	// person could confuse are there, and an hour-long A would otherwise need a million-point transform.
	const search = Math.round(options.searchSeconds * rate);
	const aFrom = Math.max(0, Math.min(a.values.length, chosen - search));
	const aTo = Math.max(aFrom, Math.min(a.values.length, chosen + length + search));
	if (aTo - aFrom < rate) return null;
	const stretch = gccPhat(a.values.subarray(aFrom, aTo), b.values.subarray(segmentStart, segmentStart + length), {
		sampleRate: rate,
		band: { lowHz: 0.5, highHz: rate * 0.35 },
		phatExponent: 1
	});
	// The stretch's lag k′ is the whole of A's lag k′ + aFrom.
	const correlation = { ...stretch, at: (k: number) => lagValue(stretch, k - aFrom) };
	const minLag = aFrom - (length - 1);
	const maxLag = aTo - 1;
	if (chosen < minLag || chosen > maxLag) return null;
	// The estimate's lag comes from the waveform, finer than one envelope step: its peak here is within a step or two.
	let chosenHeight = Number.NEGATIVE_INFINITY;
	for (let k = Math.max(minLag, chosen - 2); k <= Math.min(maxLag, chosen + 2); k++) chosenHeight = Math.max(chosenHeight, correlation.at(k));
	if (!(chosenHeight > 0)) return null;

	const halfWidth = Math.round(options.halfWidthSeconds * rate);
	const from = Math.max(minLag, chosen - halfWidth);
	const to = Math.min(maxLag, chosen + halfWidth);
	const step = Math.max(1, Math.ceil((to - from + 1) / options.maxPoints));
	const values: number[] = [];
	for (let k = from; k <= to; k += step) {
		let extreme = 0;
		for (let j = k; j < Math.min(k + step, to + 1); j++) {
			const v = correlation.at(j);
			if (Math.abs(v) > Math.abs(extreme)) extreme = v;
		}
		values.push(Math.round((extreme / chosenHeight) * 1e4) / 1e4);
	}

	const separation = Math.max(1, Math.round(options.separationSeconds * rate));
	const runnersUp = topPeaks(stretch, minLag - aFrom, maxLag - aFrom, options.runnersUp + 2, separation)
		.map((peak) => ({ ...peak, lag: peak.lag + aFrom }))
		.filter((peak) => Math.abs(peak.lag - chosen) >= separation)
		.slice(0, options.runnersUp)
		.map((peak) => ({ lagSeconds: lagOf(peak.lag), relativeHeight: Math.round((peak.value / chosenHeight) * 1e4) / 1e4 }));

	return {
		segmentCenterSeconds,
		segmentSeconds: length / rate,
		chosenLagSeconds,
		startLagSeconds: lagOf(from),
		stepSeconds: step / rate,
		values,
		runnersUp
	};
}
