import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { Refusal } from '../refusal';
import { mediaBinaries } from './binaries';
import { MAX_SAMPLE_WINDOW, readSampleWindow, sampleRange } from './samples';

/** The whole clip decoded by one plain ffmpeg command, no Lockstep code involved. */
function decodedDirectly(path: string): Float32Array {
	const bytes = execFileSync(mediaBinaries().ffmpegPath, ['-v', 'error', '-i', path, '-map', '0:a:0', '-ac', '1', '-f', 'f32le', 'pipe:1'], { maxBuffer: 1 << 30 });
	return new Float32Array(bytes.buffer, bytes.byteOffset, bytes.length / 4);
}

describe('a window of a clip’s samples', () => {
	it.each([
		['fixtures/fountain-lap/mid.mp4', 48000, 82],
		['fixtures/fountain-lap/low.mp4', 44100, 74]
	])('is the same samples as decoding the whole of %s (%i Hz)', async (path, rate, duration) => {
		const whole = decodedDirectly(path);
		for (const startSeconds of [0, 10.000021, 33.3]) {
			const window = await readSampleWindow(path, rate, duration, startSeconds, startSeconds + 0.05);
			expect(window.startSample).toBe(Math.floor(startSeconds * rate));
			expect(window.samples.length).toBe(Math.ceil((startSeconds + 0.05) * rate) - Math.floor(startSeconds * rate));
			// Judged in time, not bit for bit: after a seek ffmpeg's AAC decoder gives slightly
			// different values (measured here: up to 0.05 on mid.mp4, evenly along the window, none
			// on the first second), but the window must sit on the whole decode's samples exactly,
			// so a one-sample error, the thing this endpoint exists to show, would fail here.
			const misfit = (shift: number) => {
				let sum = 0;
				for (let i = 0; i < window.samples.length; i++) sum += Math.abs(window.samples[i] - whole[window.startSample + shift + i]);
				return sum / window.samples.length;
			};
			const shifts = Array.from({ length: 41 }, (_, i) => i - 20).filter((s) => window.startSample + s >= 0);
			const bestShift = shifts.reduce((best, s) => (misfit(s) < misfit(best) ? s : best), shifts[0]);
			expect(bestShift).toBe(0);
		}
	});

	it('refuses backwards, out-of-clip and over-long windows in words', () => {
		const refusal = (start: number, end: number) => {
			try {
				sampleRange(48000, 82, start, end);
			} catch (err) {
				return err instanceof Refusal ? err.message : String(err);
			}
			return null;
		};
		expect(refusal(2, 1)).toBe('end must be after start.');
		expect(refusal(90, 91)).toBe('start is past the end of the clip (82.000 s).');
		expect(refusal(0, 1)).toMatch(/^Ask for at most 32768 samples/);
		expect(sampleRange(48000, 82, 0, MAX_SAMPLE_WINDOW / 48000)).toEqual({ first: 0, end: MAX_SAMPLE_WINDOW });
		// A window running past the end is cut at the clip's last sample.
		expect(sampleRange(48000, 82, 81.9, 82.3)).toEqual({ first: 3931200, end: 3936000 });
	});
});
