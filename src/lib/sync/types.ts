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
 * How two clips relate, in the session formula's shape with clip A as the reference:
 * timeA = offsetSeconds + timeB × (1 + driftPpm × 1e-6).
 */
export interface PairRelation {
	offsetSeconds: number;
	driftPpm: number;
}
