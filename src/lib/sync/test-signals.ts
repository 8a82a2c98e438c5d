/**
 * Deterministic synthetic sound for the unit tests: a common "scene" of short tone bursts
 * that each clip hears on its own clock, plus the clip's own noise. Evaluated in continuous
 * time, so offsets and drift are exact rather than resampled.
 */
export function seededRandom(seed: number): () => number {
	let state = seed >>> 0 || 1;
	return () => {
		// xorshift32 (G. Marsaglia 2003)
		state ^= state << 13;
		state >>>= 0;
		state ^= state >>> 17;
		state ^= state << 5;
		state >>>= 0;
		return state / 4294967296;
	};
}

export interface Burst {
	timeSeconds: number;
	frequencyHz: number;
	widthSeconds: number;
	amplitude: number;
}

export function randomScene(durationSeconds: number, seed: number, burstsPerSecond = 30): Burst[] {
	const random = seededRandom(seed);
	const count = Math.round(durationSeconds * burstsPerSecond);
	return Array.from({ length: count }, () => ({
		timeSeconds: random() * durationSeconds,
		frequencyHz: 300 + random() * 3000,
		widthSeconds: 0.002 + random() * 0.01,
		amplitude: 0.05 + random() * 0.2
	})).sort((a, b) => a.timeSeconds - b.timeSeconds);
}

/**
 * A clip hearing the scene: its sample k is at clipTime = k / sampleRate, which is scene time
 * offsetSeconds + clipTime × (1 + driftPpm·1e-6) (DESIGN.md's formula, scene = session).
 */
export function renderClip(
	scene: Burst[],
	options: { sampleRate: number; durationSeconds: number; offsetSeconds: number; driftPpm: number; noise: number; seed: number }
): Float32Array {
	const { sampleRate } = options;
	const length = Math.round(options.durationSeconds * sampleRate);
	const out = new Float32Array(length);
	const random = seededRandom(options.seed);
	for (let k = 0; k < length; k++) out[k] = options.noise * (random() * 2 - 1);
	const scale = 1 + options.driftPpm * 1e-6;
	for (const burst of scene) {
		const clipTime = (burst.timeSeconds - options.offsetSeconds) / scale;
		const reach = 4 * burst.widthSeconds;
		const first = Math.max(0, Math.ceil((clipTime - reach) * sampleRate));
		const last = Math.min(length - 1, Math.floor((clipTime + reach) * sampleRate));
		for (let k = first; k <= last; k++) {
			const dt = (options.offsetSeconds + (k / sampleRate) * scale) - burst.timeSeconds;
			out[k] += burst.amplitude * Math.exp(-0.5 * (dt / burst.widthSeconds) ** 2) * Math.sin(2 * Math.PI * burst.frequencyHz * dt);
		}
	}
	return out;
}

/** Footsteps: loud, nearly periodic thuds (period ± jitter), the rhythm that must not fool the search. */
export function footsteps(durationSeconds: number, periodSeconds: number, jitterSeconds: number, seed: number): Burst[] {
	const random = seededRandom(seed);
	const steps: Burst[] = [];
	for (let t = random() * periodSeconds; t < durationSeconds; t += periodSeconds) {
		steps.push({ timeSeconds: t + (random() * 2 - 1) * jitterSeconds, frequencyHz: 350 + random() * 250, widthSeconds: 0.012, amplitude: 0.8 });
	}
	return steps;
}
