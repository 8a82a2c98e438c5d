/**
 * A low-rate feature for the coarse search: the rise of band-limited log energy per hop
 * (an onset envelope). It keeps the timing of speech, steps and birds, drops the waveform's
 * fine phase (so clock drift over minutes does not smear it) and is gain-independent.
 */
export interface OnsetEnvelope {
	values: Float32Array;
	rate: number;
	/** Clip time of value 0 (seconds). */
	startSeconds: number;
	/** RMS of the whole signal before filtering (full scale = 1). */
	rms: number;
}

interface Biquad {
	b0: number;
	b1: number;
	b2: number;
	a1: number;
	a2: number;
}

/** Second-order Butterworth high-pass (RBJ audio EQ cookbook, Q = 1/√2). */
export function highPassBiquad(cutoffHz: number, sampleRate: number): Biquad {
	const w0 = (2 * Math.PI * cutoffHz) / sampleRate;
	const alpha = Math.sin(w0) / (2 * Math.SQRT1_2);
	const cos = Math.cos(w0);
	const a0 = 1 + alpha;
	return {
		b0: (1 + cos) / 2 / a0,
		b1: -(1 + cos) / a0,
		b2: (1 + cos) / 2 / a0,
		a1: (-2 * cos) / a0,
		a2: (1 - alpha) / a0
	};
}

export function onsetEnvelope(
	samples: Float32Array | Int16Array,
	sampleRate: number,
	startSeconds: number,
	options: { rate?: number; highPassHz?: number; fullScale?: number } = {}
): OnsetEnvelope {
	const fullScale = options.fullScale ?? 1;
	const hop = Math.max(1, Math.round(sampleRate / (options.rate ?? 250)));
	const rate = sampleRate / hop;
	const filter = highPassBiquad(options.highPassHz ?? 300, sampleRate);
	const count = Math.floor(samples.length / hop);
	const values = new Float32Array(count);
	// Two cascaded sections (4th order) so rumble well below the cut-off cannot dominate the energy.
	let x1 = 0, x2 = 0, y1 = 0, y2 = 0, z1 = 0, z2 = 0;
	const { b0, b1, b2, a1, a2 } = filter;
	let previousLog = 0;
	// The log's floor, in the samples' own units: −100 dBFS of energy.
	const floor = 1e-10 * fullScale * fullScale;
	let index = 0;
	let squares = 0;
	for (let frame = 0; frame < count; frame++) {
		let energy = 0;
		for (let i = 0; i < hop; i++, index++) {
			const x = samples[index];
			squares += x * x;
			const y = b0 * x + b1 * x1 + b2 * x2 - a1 * y1 - a2 * y2;
			x2 = x1;
			x1 = x;
			const z = b0 * y + b1 * y1 + b2 * y2 - a1 * z1 - a2 * z2;
			y2 = y1;
			y1 = y;
			z2 = z1;
			z1 = z;
			energy += z * z;
		}
		const logEnergy = Math.log(energy / hop + floor);
		values[frame] = frame === 0 ? 0 : Math.max(logEnergy - previousLog, 0);
		previousLog = logEnergy;
	}
	for (; index < samples.length; index++) squares += samples[index] * samples[index];
	return { values, rate, startSeconds: startSeconds + hop / sampleRate / 2, rms: Math.sqrt(squares / Math.max(samples.length, 1)) / fullScale };
}
