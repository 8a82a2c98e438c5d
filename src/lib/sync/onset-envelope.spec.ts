import { describe, expect, it } from 'vitest';
import { highPassBiquad, onsetEnvelope, OnsetEnvelopeBuilder } from './onset-envelope';
import { seededRandom } from './test-signals';

/**
 * The envelope written out plainly, as the definition reads: a 4th-order high-pass (two RBJ
 * cookbook Butterworth sections, Direct Form I), mean energy per hop, then the positive rise of
 * its natural log; the first hop has no rise.
 */
function referenceEnvelope(samples: ArrayLike<number>, sampleRate: number, hop: number, cutoffHz: number, fullScale: number): number[] {
	const { b0, b1, b2, a1, a2 } = highPassBiquad(cutoffHz, sampleRate);
	const section = (input: number[]) => {
		const output: number[] = [];
		for (let n = 0; n < input.length; n++) {
			const x = (k: number) => (n - k >= 0 ? input[n - k] : 0);
			const y = (k: number) => (n - k >= 0 ? output[n - k] : 0);
			output.push(b0 * x(0) + b1 * x(1) + b2 * x(2) - a1 * y(1) - a2 * y(2));
		}
		return output;
	};
	const filtered = section(section(Array.from(samples)));
	const values: number[] = [];
	let previous = 0;
	for (let frame = 0; frame < Math.floor(samples.length / hop); frame++) {
		let energy = 0;
		for (let i = frame * hop; i < (frame + 1) * hop; i++) energy += filtered[i] ** 2;
		const log = Math.log(energy / hop + 1e-10 * fullScale * fullScale);
		values.push(frame === 0 ? 0 : Math.max(log - previous, 0));
		previous = log;
	}
	return values;
}

describe('onset envelope', () => {
	const sampleRate = 8000;
	const random = seededRandom(7);
	// Bursts of noise over a quiet floor, in 16-bit units, with 1003 samples past the last whole hop.
	const samples = Int16Array.from({ length: 64 * 300 + 1003 }, (_, i) => Math.round((random() - 0.5) * (Math.floor(i / 2000) % 2 ? 20000 : 200)));

	it('matches the definition written out plainly', () => {
		const envelope = onsetEnvelope(samples, sampleRate, 0, { rate: 125, highPassHz: 300, fullScale: 32768 });
		const reference = referenceEnvelope(samples, sampleRate, 64, 300, 32768);
		expect(envelope.values.length).toBe(reference.length);
		for (let i = 0; i < reference.length; i++) expect(envelope.values[i]).toBeCloseTo(reference[i], 4);
		let squares = 0;
		for (const x of samples) squares += x * x;
		expect(envelope.rms).toBeCloseTo(Math.sqrt(squares / samples.length) / 32768, 12);
	});

	it('gives the same envelope however the sound is cut into stretches', () => {
		const whole = onsetEnvelope(samples, sampleRate, 1.5, { rate: 125, highPassHz: 300, fullScale: 32768 });
		for (const cut of [1, 63, 64, 1000, 4096]) {
			// Not told the length: the envelope grows as the sound arrives, as it does while ffmpeg writes.
			const builder = new OnsetEnvelopeBuilder(sampleRate, { rate: 125, highPassHz: 300, fullScale: 32768 });
			for (let start = 0; start < samples.length; start += cut) builder.push(samples.subarray(start, start + cut));
			const pieces = builder.finish(1.5);
			expect(pieces.startSeconds).toBe(whole.startSeconds);
			expect(pieces.rms).toBe(whole.rms);
			expect(Array.from(pieces.values)).toEqual(Array.from(whole.values));
		}
	});
});
