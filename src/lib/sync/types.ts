/**
 * Mono PCM of one clip on its own media timeline: sample k is at
 * clipTime = startSeconds + k / sampleRate (container timestamps, edit lists honoured).
 * Decoded clips hold 16-bit samples (half the memory of float, which an hour of sound at 8 kHz
 * makes worth having); `fullScale` says what value a full-scale sample has.
 */
export interface PcmTrack {
	samples: Float32Array | Int16Array;
	sampleRate: number;
	startSeconds: number;
	/** 1 for float samples (the default), 32768 for 16-bit. */
	fullScale?: number;
}

/**
 * Mono PCM read a stretch at a time, wherever it is kept (an array here, a scratch file in the
 * server): sample k is at clip time startSeconds + k / sampleRate. An hour of sound never has to
 * sit in memory whole; the analysis reads an envelope's worth in passing and then only windows.
 */
export interface PcmSource {
	readonly sampleRate: number;
	readonly startSeconds: number;
	/** Number of samples. */
	readonly length: number;
	/** What value a full-scale sample has. */
	readonly fullScale: number;
	/** Samples start … start + count − 1, all inside 0 … length. */
	read(start: number, count: number): Float32Array | Int16Array;
}

/** A track in memory as a source (views, no copies). */
export function pcmSource(track: PcmTrack): PcmSource {
	return {
		sampleRate: track.sampleRate,
		startSeconds: track.startSeconds,
		length: track.samples.length,
		fullScale: track.fullScale ?? 1,
		read: (start, count) => track.samples.subarray(start, start + count)
	};
}

/**
 * How two clips relate, in the session formula's shape with clip A as the reference:
 * timeA = offsetSeconds + timeB × (1 + driftPpm × 1e-6).
 */
export interface PairRelation {
	offsetSeconds: number;
	driftPpm: number;
}
