/**
 * Mono PCM of one clip on its own media timeline: sample k is at
 * clipTime = startSeconds + k / sampleRate (container timestamps, edit lists honoured).
 */
export interface PcmTrack {
	samples: Float32Array;
	sampleRate: number;
	startSeconds: number;
}

/**
 * How two clips relate, in the session formula's shape with clip A as the reference:
 * timeA = offsetSeconds + timeB × (1 + driftPpm × 1e-6).
 */
export interface PairRelation {
	offsetSeconds: number;
	driftPpm: number;
}
