import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { mediaBinaries } from './binaries';
import { computePeaks, readPeaksWindow } from './peaks';

const CLIP = 'fixtures/fountain-lap/mid.mp4';
const out = mkdtempSync(join(tmpdir(), 'lockstep-peaks-'));
afterAll(() => rmSync(out, { recursive: true, force: true }));

/** The clip's sound decoded directly by ffmpeg, one plain command, no Lockstep code involved. */
function decodedDirectly(path: string): Float32Array {
	const bytes = execFileSync(mediaBinaries().ffmpegPath, ['-v', 'error', '-i', path, '-map', '0:a:0', '-ac', '1', '-f', 'f32le', 'pipe:1'], {
		maxBuffer: 1 << 30
	});
	return new Float32Array(bytes.buffer, bytes.byteOffset, bytes.length / 4);
}

describe('waveform peaks of a fixture clip', () => {
	it('agree with min/max computed directly from the decoded samples, at every level', async () => {
		const index = await computePeaks(CLIP, out, 48000);
		const samples = decodedDirectly(CLIP);
		// Definition of a peak pair: the min and max of each bucket of consecutive samples.
		for (const level of index.levels) {
			const file = readFileSync(join(out, level.file));
			const stored = new Float32Array(file.buffer.slice(file.byteOffset, file.byteOffset + file.length));
			expect(level.bucketCount).toBe(Math.ceil(samples.length / level.bucketSize));
			let worst = 0;
			for (let b = 0; b < level.bucketCount; b++) {
				let min = Infinity;
				let max = -Infinity;
				for (let i = b * level.bucketSize; i < Math.min(samples.length, (b + 1) * level.bucketSize); i++) {
					if (samples[i] < min) min = samples[i];
					if (samples[i] > max) max = samples[i];
				}
				worst = Math.max(worst, Math.abs(stored[2 * b] - min), Math.abs(stored[2 * b + 1] - max));
			}
			expect(worst).toBe(0);
		}
	});

	it('serves only the window asked for, at about one bucket per pixel', async () => {
		const window = await readPeaksWindow(out, 10, 20, 500);
		// 10 s at 48 kHz over 500 px = 960 samples a pixel: the 512-sample level, 938 buckets.
		expect(window.bucketSize).toBe(512);
		expect(window.peaks.length / 2).toBe(Math.ceil((20 * 48000) / 512) - Math.floor((10 * 48000) / 512));
		expect(window.startSeconds).toBeCloseTo((Math.floor((10 * 48000) / 512) * 512) / 48000, 9);
	});
});
