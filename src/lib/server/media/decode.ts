import { spawn } from 'node:child_process';
import { accessSync, closeSync, constants, fstatSync, mkdtempSync, openSync, readdirSync, readSync, rmSync, unlinkSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { PcmTrack } from '../../sync/types';
import { mediaBinaries } from './binaries';
import { MediaReadError } from './probe';

export interface DecodeOptions {
	sampleRate: number;
	signal?: AbortSignal;
	/** Force one resampler (tests compare them); by default soxr, falling back to ffmpeg's own. */
	resampler?: Resampler;
}

export type Resampler = 'soxr' | 'swr';

/** soxr unless this ffmpeg turned out to be built without it. */
let preferredResampler: Resampler = 'soxr';

/** ffmpeg arguments that decode the first audio stream to mono 16-bit PCM at `sampleRate`, placed on the container's timeline. */
export function decodeArguments(path: string, sampleRate: number, resampler: Resampler, outputPath: string): string[] {
	return [
		'-nostdin', '-v', 'error', '-y',
		// Keep the container's timestamps (edit lists applied by the demuxer) and pad or trim so that
		// output sample k is at clip time k / sampleRate: audio that starts late gets leading silence.
		'-copyts', '-i', path,
		'-map', '0:a:0', '-vn', '-sn', '-dn',
		// The padding is done at the stream's own rate, then the rate is converted: soxr converts 48 kHz
		// to 8 kHz for about a fifth of what the AAC decode itself costs (ffmpeg's own resampler costs
		// half to all of it again), but asked to pad as well it shifts the audio by its filter delay.
		'-af', `aresample=async=1:first_pts=0,aresample=${sampleRate}:resampler=${resampler}${resampler === 'soxr' ? ':precision=20' : ':filter_size=16'}`,
		'-ac', '1', '-ar', String(sampleRate),
		// 16-bit samples, kept as they are: half the memory of float (an hour at 8 kHz is 58 MB, and
		// first touching fresh memory is what costs here), far below any microphone's noise floor.
		'-f', 's16le', outputPath
	];
}

let scratch: string | null = null;
let decodes = 0;

/**
 * A folder of this process's for decoded sound, in memory where the system offers it (/dev/shm),
 * removed when the process ends. ffmpeg writes there and the file is read back in one call:
 * through a pipe, Node pays an event and a buffer for every 64 KB, about a third of a CPU-second
 * for an hour of sound, which is a fifth of what decoding that hour costs.
 */
export function scratchFolder(): string {
	if (scratch) return scratch;
	let parent = tmpdir();
	try {
		accessSync('/dev/shm', constants.W_OK);
		parent = '/dev/shm';
	} catch {
		// no shared-memory file system: the temporary folder serves
	}
	sweepAbandonedFolders(parent);
	const folder = mkdtempSync(join(parent, `lockstep-decode-${process.pid}-`));
	process.once('exit', () => rmSync(folder, { recursive: true, force: true }));
	scratch = folder;
	return folder;
}

/** Folders of processes that ended without tidying up (killed, say): their sound would sit in memory. */
export function sweepAbandonedFolders(parent: string) {
	for (const name of readdirSync(parent)) {
		const owner = /^lockstep-decode-(\d+)-/.exec(name)?.[1];
		if (!owner || isRunning(Number(owner))) continue;
		rmSync(join(parent, name), { recursive: true, force: true });
	}
}

function isRunning(pid: number): boolean {
	try {
		process.kill(pid, 0);
		return true;
	} catch (error) {
		// EPERM: it runs, as someone else.
		return (error as NodeJS.ErrnoException).code === 'EPERM';
	}
}

/**
 * Decodes a clip's audio to mono 16-bit PCM in shared memory, so worker threads can read it
 * without a copy. Sample k is at clip time k / sampleRate.
 */
export async function decodeAudio(path: string, options: DecodeOptions): Promise<PcmTrack> {
	if (options.resampler) return decodeWith(path, options, options.resampler);
	try {
		return await decodeWith(path, options, preferredResampler);
	} catch (error) {
		if (!(error instanceof MediaReadError) || preferredResampler !== 'soxr' || !/soxr|resampl/i.test(error.reason)) throw error;
		preferredResampler = 'swr';
		return decodeWith(path, options, 'swr');
	}
}

function decodeWith(path: string, options: DecodeOptions, resampler: Resampler): Promise<PcmTrack> {
	const { sampleRate } = options;
	const outputPath = join(scratchFolder(), `${++decodes}.s16`);
	const child = spawn(mediaBinaries().ffmpegPath, decodeArguments(path, sampleRate, resampler, outputPath), {
		stdio: ['ignore', 'ignore', 'pipe'],
		signal: options.signal
	});
	const stderr: string[] = [];
	child.stderr.setEncoding('utf8');
	child.stderr.on('data', (text: string) => {
		stderr.push(text);
		if (stderr.length > 50) stderr.shift();
	});
	return new Promise<PcmTrack>((resolve, reject) => {
		child.on('error', (error) => reject(new MediaReadError(path, `ffmpeg did not run: ${error.message}`)));
		child.on('close', (code) => {
			if (code !== 0) {
				const last = stderr.join('').trim().split('\n').pop();
				reject(new MediaReadError(path, last || `ffmpeg could not decode its audio (exit ${code})`));
				return;
			}
			try {
				resolve({ samples: readSamples(outputPath), sampleRate, startSeconds: 0, fullScale: 32768 });
			} catch (error) {
				reject(new MediaReadError(path, `the decoded sound could not be read back: ${(error as Error).message}`));
			}
		});
	}).finally(() => {
		try {
			unlinkSync(outputPath);
		} catch {
			// never written (ffmpeg failed first) or already gone
		}
	});
}

/** The whole file, read straight into shared memory. The machine's byte order is little-endian (x64, arm64). */
function readSamples(filePath: string): Int16Array {
	const fd = openSync(filePath, 'r');
	try {
		const size = fstatSync(fd).size & ~1;
		const buffer = new SharedArrayBuffer(size);
		const bytes = new Uint8Array(buffer);
		for (let offset = 0; offset < size; ) {
			const read = readSync(fd, bytes, offset, Math.min(1 << 26, size - offset), offset);
			if (read === 0) throw new Error('the file ended early');
			offset += read;
		}
		return new Int16Array(buffer);
	} finally {
		closeSync(fd);
	}
}
