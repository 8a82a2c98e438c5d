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

export interface OnsetEnvelopeOptions {
	rate?: number;
	highPassHz?: number;
	fullScale?: number;
}

export function onsetEnvelope(
	samples: Float32Array | Int16Array,
	sampleRate: number,
	startSeconds: number,
	options: OnsetEnvelopeOptions = {}
): OnsetEnvelope {
	const builder = new OnsetEnvelopeBuilder(sampleRate, options, samples.length);
	builder.push(samples);
	return builder.finish(startSeconds);
}

/**
 * The same envelope fed a stretch at a time, as the sound arrives (while ffmpeg is still
 * writing it, say) instead of held in memory whole; the filter state carries over, so the result
 * does not depend on how the sound was cut. Samples past the last whole hop count towards the
 * level only.
 */
export class OnsetEnvelopeBuilder {
	private readonly hop: number;
	private readonly rate: number;
	private values: Float32Array;
	private readonly filter: Biquad;
	// The log's floor, in the samples' own units: −100 dBFS of energy.
	private readonly floor: number;
	private readonly fullScale: number;
	private readonly sampleRate: number;
	private x1 = 0;
	private x2 = 0;
	private y1 = 0;
	private y2 = 0;
	private z1 = 0;
	private z2 = 0;
	private frame = 0;
	private inHop = 0;
	private energy = 0;
	private previousLog = 0;
	private squares = 0;
	private seen = 0;

	constructor(
		sampleRate: number,
		options: OnsetEnvelopeOptions = {},
		/** Samples expected in all, if known: the envelope's array is sized once. */
		expectedLength = 0
	) {
		this.sampleRate = sampleRate;
		this.fullScale = options.fullScale ?? 1;
		this.hop = Math.max(1, Math.round(sampleRate / (options.rate ?? 250)));
		this.rate = sampleRate / this.hop;
		this.filter = highPassBiquad(options.highPassHz ?? 300, sampleRate);
		this.values = new Float32Array(Math.max(1024, Math.floor(expectedLength / this.hop)));
		this.floor = 1e-10 * this.fullScale * this.fullScale;
	}

	push(samples: Float32Array | Int16Array) {
		const hopsAhead = this.frame + Math.ceil((this.inHop + samples.length) / this.hop);
		if (hopsAhead > this.values.length) {
			const grown = new Float32Array(Math.max(hopsAhead, this.values.length * 2));
			grown.set(this.values.subarray(0, this.frame));
			this.values = grown;
		}
		const { b0, b1, b2, a1, a2 } = this.filter;
		const { hop, values, floor } = this;
		// Two cascaded sections (4th order) so rumble well below the cut-off cannot dominate the energy.
		let { x1, x2, y1, y2, z1, z2, frame, inHop, energy, previousLog, squares } = this;
		for (let index = 0; index < samples.length; index++) {
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
			if (++inHop === hop) {
				const logEnergy = Math.log(energy / hop + floor);
				values[frame] = frame === 0 ? 0 : Math.max(logEnergy - previousLog, 0);
				previousLog = logEnergy;
				frame++;
				inHop = 0;
				energy = 0;
			}
		}
		Object.assign(this, { x1, x2, y1, y2, z1, z2, frame, inHop, energy, previousLog, squares });
		this.seen += samples.length;
	}

	/** The envelope of everything pushed, for sound whose first sample is at `startSeconds`. */
	finish(startSeconds: number): OnsetEnvelope {
		return {
			values: this.values.slice(0, this.frame),
			rate: this.rate,
			startSeconds: startSeconds + this.hop / this.sampleRate / 2,
			rms: Math.sqrt(this.squares / Math.max(this.seen, 1)) / this.fullScale
		};
	}
}
