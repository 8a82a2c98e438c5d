import { spawn } from 'node:child_process';
import { open, readFile, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { bucketRange, chooseLevel, coarsenPeaks, PeakAccumulator, PEAK_BUCKET_SIZES } from '../../sync/peaks';
import { mediaBinaries } from './binaries';

/*
 * Peaks are computed while ffmpeg streams the clip's audio, so even an hour of 48 kHz sound
 * never sits in memory; each level is stored as little-endian float32 pairs in its own file
 * and read back one window at a time.
 */

/** Mono float32 at the clip's own rate, on the container's timeline (sample k at clip time k / rate). */
export function peaksDecodeArguments(mediaPath: string, sampleRate: number): string[] {
	return [
		'-nostdin', '-v', 'error', '-copyts', '-i', mediaPath,
		'-map', '0:a:0', '-vn', '-sn', '-dn',
		'-af', `aresample=${sampleRate}:async=1:first_pts=0`,
		'-ac', '1', '-ar', String(sampleRate),
		'-f', 'f32le', 'pipe:1'
	];
}

export interface PeaksIndex {
	sampleRate: number;
	levels: { bucketSize: number; bucketCount: number; file: string }[];
}

export async function computePeaks(
	mediaPath: string,
	outDir: string,
	sampleRate: number,
	options: { signal?: AbortSignal; durationSeconds?: number; onProgress?: (fraction: number) => void } = {}
): Promise<PeaksIndex> {
	const finest = new PeakAccumulator(PEAK_BUCKET_SIZES[0]);
	const child = spawn(mediaBinaries().ffmpegPath, peaksDecodeArguments(mediaPath, sampleRate), {
		stdio: ['ignore', 'pipe', 'pipe'],
		signal: options.signal
	});
	let stderr = '';
	child.stderr.setEncoding('utf8');
	child.stderr.on('data', (t: string) => (stderr = (stderr + t).slice(-2000)));
	let carry = Buffer.alloc(0);
	let samplesSeen = 0;
	const expected = (options.durationSeconds ?? 0) * sampleRate;
	child.stdout.on('data', (chunk: Buffer) => {
		const data = carry.length ? Buffer.concat([carry, chunk]) : chunk;
		const whole = data.length - (data.length % 4);
		const aligned = new Float32Array(whole / 4);
		Buffer.from(aligned.buffer).set(data.subarray(0, whole));
		finest.push(aligned);
		samplesSeen += aligned.length;
		carry = Buffer.from(data.subarray(whole));
		if (expected > 0) options.onProgress?.(Math.min(0.99, samplesSeen / expected));
	});
	await new Promise<void>((resolve, reject) => {
		child.on('error', reject);
		child.on('close', (code) => (code === 0 ? resolve() : reject(new Error(`ffmpeg could not decode the audio: ${stderr.trim().split('\n').pop() ?? code}`))));
	});

	const levels: PeaksIndex['levels'] = [];
	let data = finest.finish();
	for (let i = 0; i < PEAK_BUCKET_SIZES.length; i++) {
		if (i > 0) data = coarsenPeaks(data, PEAK_BUCKET_SIZES[i] / PEAK_BUCKET_SIZES[i - 1]);
		const file = `peaks-${PEAK_BUCKET_SIZES[i]}.f32`;
		await writeFile(join(outDir, file), Buffer.from(data.buffer, data.byteOffset, data.byteLength));
		levels.push({ bucketSize: PEAK_BUCKET_SIZES[i], bucketCount: data.length / 2, file });
	}
	const index: PeaksIndex = { sampleRate, levels };
	await writeFile(join(outDir, 'peaks.json'), JSON.stringify(index));
	return index;
}

export interface PeaksWindow {
	sampleRate: number;
	bucketSize: number;
	/** Clip time of the first bucket's start. */
	startSeconds: number;
	/** Interleaved min/max pairs. */
	peaks: number[];
}

/** Reads only the buckets covering [startSeconds, endSeconds), at about one bucket per pixel. */
export async function readPeaksWindow(dir: string, startSeconds: number, endSeconds: number, pixels: number): Promise<PeaksWindow> {
	const index = JSON.parse(await readFile(join(dir, 'peaks.json'), 'utf8')) as PeaksIndex;
	const level = index.levels[chooseLevel(index.sampleRate, endSeconds - startSeconds, pixels, index.levels.map((l) => l.bucketSize))];
	const { first, end } = bucketRange(index.sampleRate, level.bucketSize, level.bucketCount, startSeconds, endSeconds);
	const bytes = Buffer.alloc((end - first) * 8);
	if (bytes.length > 0) {
		const handle = await open(join(dir, level.file), 'r');
		try {
			await handle.read(bytes, 0, bytes.length, first * 8);
		} finally {
			await handle.close();
		}
	}
	const values = new Float32Array(bytes.buffer, bytes.byteOffset, bytes.length / 4);
	return {
		sampleRate: index.sampleRate,
		bucketSize: level.bucketSize,
		startSeconds: (first * level.bucketSize) / index.sampleRate,
		peaks: Array.from(values, (v) => Math.round(v * 10000) / 10000)
	};
}
