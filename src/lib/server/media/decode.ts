import { spawn } from 'node:child_process';
import type { PcmTrack } from '../../sync/types';
import { mediaBinaries } from './binaries';
import { MediaReadError } from './probe';

export interface DecodeOptions {
	sampleRate: number;
	/** Expected length, to size the buffer once; it grows if the file holds more. */
	expectedSeconds?: number;
	signal?: AbortSignal;
}

/** ffmpeg arguments that decode the first audio stream to mono float at `sampleRate`, placed on the container's timeline. */
export function decodeArguments(path: string, sampleRate: number): string[] {
	return [
		'-nostdin', '-v', 'error',
		// Keep the container's timestamps (edit lists applied by the demuxer) and pad or trim so that
		// output sample k is at clip time k / sampleRate: audio that starts late gets leading silence.
		'-copyts', '-i', path,
		'-map', '0:a:0', '-vn', '-sn', '-dn',
		// A shorter resampling filter than the default 32 taps: the analysis band stops well short of
		// Nyquist, and this is a third of ffmpeg's work on a compressed track.
		'-af', `aresample=${sampleRate}:async=1:first_pts=0:filter_size=16`,
		'-ac', '1', '-ar', String(sampleRate),
		// 16-bit over the pipe: half the bytes, and far below any microphone's noise floor.
		'-f', 's16le', 'pipe:1'
	];
}

/**
 * Decodes a clip's audio to mono float PCM streamed from ffmpeg's stdout, straight into shared
 * memory so worker threads can read it without a copy. Sample k is at clip time k / sampleRate.
 */
export function decodeAudio(path: string, options: DecodeOptions): Promise<PcmTrack> {
	const { sampleRate } = options;
	let capacity = Math.max(1024, Math.ceil(((options.expectedSeconds ?? 60) + 2) * sampleRate));
	let samples = new Float32Array(new SharedArrayBuffer(capacity * 4));
	let length = 0;
	const carry = Buffer.alloc(2);
	let carried = 0;
	const child = spawn(mediaBinaries().ffmpegPath, decodeArguments(path, sampleRate), {
		stdio: ['ignore', 'pipe', 'pipe'],
		signal: options.signal
	});
	const stderr: string[] = [];
	child.stderr.setEncoding('utf8');
	child.stderr.on('data', (text: string) => {
		stderr.push(text);
		if (stderr.length > 50) stderr.shift();
	});
	function push(value: number) {
		if (length === capacity) {
			capacity = Math.ceil(capacity * 1.5);
			const grown = new Float32Array(new SharedArrayBuffer(capacity * 4));
			grown.set(samples);
			samples = grown;
		}
		samples[length++] = value;
	}
	child.stdout.on('data', (chunk: Buffer) => {
		let offset = 0;
		if (carried) {
			carry[carried++] = chunk[offset++];
			push(carry.readInt16LE(0) / 32768);
			carried = 0;
		}
		const whole = (chunk.length - offset) >> 1;
		if (length + whole > capacity) {
			capacity = Math.ceil((length + whole) * 1.25);
			const grown = new Float32Array(new SharedArrayBuffer(capacity * 4));
			grown.set(samples.subarray(0, length));
			samples = grown;
		}
		// Convert through a local view: a loop that writes through the closure's `length` is ten times slower.
		const target = samples.subarray(length, length + whole);
		if ((chunk.byteOffset + offset) % 2 === 0) target.set(new Int16Array(chunk.buffer, chunk.byteOffset + offset, whole));
		else for (let i = 0; i < whole; i++) target[i] = chunk.readInt16LE(offset + 2 * i);
		for (let i = 0; i < whole; i++) target[i] *= 1 / 32768;
		length += whole;
		offset += whole * 2;
		if (offset < chunk.length) carry[carried++] = chunk[offset];
	});
	return new Promise((resolve, reject) => {
		child.on('error', (error) => reject(new MediaReadError(path, `ffmpeg did not run: ${error.message}`)));
		child.on('close', (code) => {
			if (code !== 0) {
				const last = stderr.join('').trim().split('\n').pop();
				reject(new MediaReadError(path, last || `ffmpeg could not decode its audio (exit ${code})`));
				return;
			}
			resolve({ samples: samples.subarray(0, length), sampleRate, startSeconds: 0 });
		});
	});
}
