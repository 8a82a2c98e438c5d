import { spawn } from 'node:child_process';
import type { PcmTrack } from '../../sync/types';
import { mediaBinaries } from './binaries';
import { MediaReadError } from './probe';

export interface DecodeOptions {
	sampleRate: number;
	/**
	 * Expected length, to size the buffer once. It may arrive later (from a probe running beside
	 * the decode); until then, and if the file holds more, the buffer doubles as needed.
	 */
	expectedSeconds?: number | Promise<number | undefined>;
	signal?: AbortSignal;
	/** Force one resampler (tests compare them); by default soxr, falling back to ffmpeg's own. */
	resampler?: Resampler;
}

export type Resampler = 'soxr' | 'swr';

/** soxr unless this ffmpeg turned out to be built without it. */
let preferredResampler: Resampler = 'soxr';
const BYTES_PER_SAMPLE = 2;

/** ffmpeg arguments that decode the first audio stream to mono 16-bit PCM at `sampleRate`, placed on the container's timeline. */
export function decodeArguments(path: string, sampleRate: number, resampler: Resampler = preferredResampler): string[] {
	return [
		'-nostdin', '-v', 'error',
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
		'-f', 's16le',
		// Write whole 32 KB buffers, not one ~300-byte write per audio frame: each read costs Node an event.
		'-flush_packets', '0', 'pipe:1'
	];
}

/**
 * Decodes a clip's audio to mono 16-bit PCM streamed from ffmpeg's stdout, straight into shared
 * memory so worker threads can read it without a copy. Sample k is at clip time k / sampleRate.
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
	const bytesFor = (seconds: number) => Math.ceil((seconds + 2) * sampleRate) * BYTES_PER_SAMPLE;
	let buffer = new SharedArrayBuffer(typeof options.expectedSeconds === 'number' ? bytesFor(options.expectedSeconds) : bytesFor(60));
	let bytes = new Uint8Array(buffer);
	let filled = 0;
	function resize(byteLength: number) {
		const grown = new SharedArrayBuffer(byteLength);
		const grownBytes = new Uint8Array(grown);
		grownBytes.set(bytes.subarray(0, filled));
		buffer = grown;
		bytes = grownBytes;
	}
	if (options.expectedSeconds instanceof Promise) {
		options.expectedSeconds.then(
			(seconds) => {
				if (seconds !== undefined && bytesFor(seconds) > buffer.byteLength) resize(bytesFor(seconds));
			},
			() => {}
		);
	}
	const child = spawn(mediaBinaries().ffmpegPath, decodeArguments(path, sampleRate, resampler), {
		stdio: ['ignore', 'pipe', 'pipe'],
		signal: options.signal
	});
	const stderr: string[] = [];
	child.stderr.setEncoding('utf8');
	child.stderr.on('data', (text: string) => {
		stderr.push(text);
		if (stderr.length > 50) stderr.shift();
	});
	child.stdout.on('data', (chunk: Buffer) => {
		if (filled + chunk.length > buffer.byteLength) resize(Math.max(2 * buffer.byteLength, filled + chunk.length));
		bytes.set(chunk, filled);
		filled += chunk.length;
	});
	return new Promise((resolve, reject) => {
		child.on('error', (error) => reject(new MediaReadError(path, `ffmpeg did not run: ${error.message}`)));
		child.on('close', (code) => {
			if (code !== 0) {
				const last = stderr.join('').trim().split('\n').pop();
				reject(new MediaReadError(path, last || `ffmpeg could not decode its audio (exit ${code})`));
				return;
			}
			// The machine's byte order is little-endian on every platform Node runs on here (x64, arm64).
			resolve({ samples: new Int16Array(buffer, 0, filled >> 1), sampleRate, startSeconds: 0, fullScale: 32768 });
		});
	});
}
