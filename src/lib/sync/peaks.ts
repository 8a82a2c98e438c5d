/*
 * Waveform peaks: for each bucket of `bucketSize` consecutive samples, the minimum and the
 * maximum, interleaved [min0, max0, min1, max1, …]. Several levels are kept so a view of any
 * width reads about one bucket per pixel, and only the buckets of the visible window.
 */

/** Samples per bucket at each level, finest first; each level is 8× coarser than the one before. */
export const PEAK_BUCKET_SIZES = [64, 512, 4096, 32768] as const;

/** Streams samples in and keeps the min/max of every full bucket (and the last, partial one). */
export class PeakAccumulator {
	private values: number[] = [];
	private count = 0;
	private min = Infinity;
	private max = -Infinity;

	constructor(readonly bucketSize: number) {}

	push(samples: ArrayLike<number>): void {
		for (let i = 0; i < samples.length; i++) {
			const v = samples[i];
			if (v < this.min) this.min = v;
			if (v > this.max) this.max = v;
			if (++this.count === this.bucketSize) this.flush();
		}
	}

	private flush(): void {
		this.values.push(this.min, this.max);
		this.count = 0;
		this.min = Infinity;
		this.max = -Infinity;
	}

	finish(): Float32Array {
		if (this.count > 0) this.flush();
		return Float32Array.from(this.values);
	}
}

/** A coarser level from a finer one: `factor` buckets become one. */
export function coarsenPeaks(finer: Float32Array, factor: number): Float32Array {
	const finerBuckets = finer.length / 2;
	const buckets = Math.ceil(finerBuckets / factor);
	const out = new Float32Array(buckets * 2);
	for (let b = 0; b < buckets; b++) {
		let min = Infinity;
		let max = -Infinity;
		const end = Math.min(finerBuckets, (b + 1) * factor);
		for (let f = b * factor; f < end; f++) {
			if (finer[2 * f] < min) min = finer[2 * f];
			if (finer[2 * f + 1] > max) max = finer[2 * f + 1];
		}
		out[2 * b] = min;
		out[2 * b + 1] = max;
	}
	return out;
}

/** The coarsest level that still gives at least one bucket per pixel for the window asked for. */
export function chooseLevel(sampleRate: number, windowSeconds: number, pixels: number, bucketSizes: readonly number[] = PEAK_BUCKET_SIZES): number {
	const samplesPerPixel = (windowSeconds * sampleRate) / Math.max(1, pixels);
	let level = 0;
	for (let i = 0; i < bucketSizes.length; i++) if (bucketSizes[i] <= samplesPerPixel) level = i;
	return level;
}

/** Bucket range [first, end) covering clip times [startSeconds, endSeconds) at one level. */
export function bucketRange(sampleRate: number, bucketSize: number, bucketCount: number, startSeconds: number, endSeconds: number) {
	const first = Math.min(bucketCount, Math.max(0, Math.floor((startSeconds * sampleRate) / bucketSize)));
	const end = Math.min(bucketCount, Math.ceil((endSeconds * sampleRate) / bucketSize));
	return { first, end: Math.max(first, end) };
}
