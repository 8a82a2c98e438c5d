import { spawn } from 'node:child_process';
import { accessSync, closeSync, constants, fstatSync, mkdtempSync, openSync, readdirSync, readSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { PcmTrack } from '../../sync/types';
import { mediaBinaries } from './binaries';
import { MediaReadError, probeMedia, type MediaProbe } from './probe';

export interface DecodeOptions {
	sampleRate: number;
	signal?: AbortSignal;
	/** Force one resampler (tests compare them); by default soxr, falling back to ffmpeg's own. */
	resampler?: Resampler;
	/**
	 * Hands over each clip's samples (by its index in `paths`) in order, as ffmpeg writes them, so
	 * they can be analysed while the rest decodes. The array is reused: read it before returning.
	 * `null` means start again: this clip is being decoded anew (alone, after its run failed).
	 */
	follow?: (index: number, samples: Int16Array | null) => void;
}

export type Resampler = 'soxr' | 'swr';

/** soxr unless this ffmpeg turned out to be built without it. */
let preferredResampler: Resampler = 'soxr';

/** One clip's sound decoded into a scratch file: sample k is at clip time startSeconds + k / sampleRate. */
export interface DecodedSound {
	/** The clip it came from. */
	source: string;
	/** Mono 16-bit little-endian PCM, no header. */
	scratchPath: string;
	sampleRate: number;
	/**
	 * Where the first sample sits on the clip's timeline: the audio stream's start time as the
	 * demuxer reports it (container timestamps, edit lists and encoder priming applied).
	 */
	startSeconds: number;
	/** Samples in the file. */
	length: number;
	fullScale: number;
}

/**
 * ffmpeg arguments that decode the first audio stream of each input to mono 16-bit PCM at
 * `sampleRate`, one scratch file per input, all in one process: ffmpeg's start-up (loading its
 * two hundred libraries) costs more than decoding a minute of sound, so short clips share it.
 */
export function decodeArguments(paths: string[], sampleRate: number, resampler: Resampler, outputPaths: string[]): string[] {
	const converter = `aresample=${sampleRate}:resampler=${resampler}${resampler === 'soxr' ? ':precision=20' : ':filter_size=16'}`;
	// The first sample is the stream's start (its probe says where that is); gaps in the
	// timestamps after it are filled, at the low rate where that costs a sixth. Padding the start
	// at the stream's own rate would cost as much again as the rate conversion, and soxr asked to
	// pad shifts the sound by its filter delay.
	// Decoders hand over small frames (1024 samples for AAC) and every filter pays per frame, in
	// allocations and bookkeeping about as much as the conversion itself; regrouped into frames of
	// 16384 samples (without padding the last) the same sound goes through for about a fifth less.
	const chains = paths.map((_, i) => `[${i}:a:0]asetnsamples=n=16384:p=0,${converter},aresample=async=1,aformat=sample_fmts=s16:channel_layouts=mono[pcm${i}]`);
	return [
		'-nostdin', '-v', 'error', '-y',
		'-copyts',
		...paths.flatMap((path) => ['-i', path]),
		'-filter_complex', chains.join(';'),
		// 16-bit samples, kept as they are: half the scratch space of float, far below any microphone's noise floor.
		...outputPaths.flatMap((output, i) => ['-map', `[pcm${i}]`, '-f', 's16le', output])
	];
}

let scratch: string | null = null;
let decodes = 0;

/**
 * A folder of this process's for decoded sound, in memory where the system offers it (/dev/shm),
 * removed when the process ends. ffmpeg writes there and the analysis reads it back a stretch
 * at a time: through a pipe, Node pays an event and a buffer for every 64 KB, about a third of
 * a CPU-second for an hour of sound, which is a fifth of what decoding that hour costs.
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

/** What a full-scale sample is in the decoded 16-bit sound. */
export const decodedFullScale = 32768;

/** Decoded sound not yet placed on its clip's timeline: its probe says where it starts. */
export type DecodedPcm = Omit<DecodedSound, 'startSeconds'>;

/**
 * Decodes the sound of several clips in one ffmpeg run, each into a scratch file of its own
 * (remove them with `releaseSound`). One unreadable clip fails the whole run, so then each is
 * decoded alone and every failure is reported against its own file.
 */
export async function decodeSounds(paths: string[], options: DecodeOptions): Promise<PromiseSettledResult<DecodedPcm>[]> {
	try {
		const sounds = await decodeWithFallback(paths, options);
		return sounds.map((value) => ({ status: 'fulfilled', value }));
	} catch (error) {
		if (paths.length === 1 || options.signal?.aborted) return paths.map(() => ({ status: 'rejected', reason: error }));
		return Promise.all(
			paths.map(async (path): Promise<PromiseSettledResult<DecodedPcm>> => {
				try {
					const follow = options.follow;
					const [sound] = await decodeWithFallback([path], { ...options, follow: follow && ((_, samples) => follow(paths.indexOf(path), samples)) });
					return { status: 'fulfilled', value: sound };
				} catch (reason) {
					return { status: 'rejected', reason };
				}
			})
		);
	}
}

/** One clip's sound, read whole into memory (for callers that want the samples, not a file). */
export async function decodeAudio(path: string, options: DecodeOptions): Promise<PcmTrack> {
	const [probe, [result]] = await Promise.all([probeMedia(path), decodeSounds([path], options)]);
	if (result.status === 'rejected') throw result.reason;
	const sound = result.value;
	try {
		return { samples: readSamples(sound.scratchPath), sampleRate: sound.sampleRate, startSeconds: audioStartSeconds(probe), fullScale: sound.fullScale };
	} catch (error) {
		throw new MediaReadError(path, `the decoded sound could not be read back: ${(error as Error).message}`);
	} finally {
		releaseSound(sound);
	}
}

/** Where a clip's decoded sound starts on its timeline. */
export function audioStartSeconds(probe: MediaProbe): number {
	return probe.audio?.startSeconds ?? probe.startSeconds;
}

export function releaseSound(sound: DecodedPcm) {
	rmSync(sound.scratchPath, { force: true });
}

async function decodeWithFallback(paths: string[], options: DecodeOptions): Promise<DecodedPcm[]> {
	if (options.resampler) return decodeWith(paths, options, options.resampler);
	try {
		return await decodeWith(paths, options, preferredResampler);
	} catch (error) {
		if (!(error instanceof MediaReadError) || preferredResampler !== 'soxr' || !/soxr|resampl/i.test(error.reason)) throw error;
		preferredResampler = 'swr';
		return decodeWith(paths, options, 'swr');
	}
}

function decodeWith(paths: string[], options: DecodeOptions, resampler: Resampler): Promise<DecodedPcm[]> {
	const { sampleRate } = options;
	const folder = scratchFolder();
	const outputPaths = paths.map(() => join(folder, `${++decodes}.s16`));
	const removeOutputs = () => outputPaths.forEach((output) => rmSync(output, { force: true }));
	const child = spawn(mediaBinaries().ffmpegPath, decodeArguments(paths, sampleRate, resampler, outputPaths), {
		stdio: ['ignore', 'ignore', 'pipe'],
		signal: options.signal
	});
	const follow = options.follow;
	paths.forEach((_, i) => follow?.(i, null));
	const followers = follow ? outputPaths.map((output, i) => new GrowingFileReader(output, (samples) => follow(i, samples))) : [];
	// ffmpeg writes each output as it goes; reading behind it overlaps the analysis with the decode.
	// A reader or follower that fails stops the reading, and the decode fails with its reason.
	let followFailure: Error | null = null;
	const readAll = () => {
		if (followFailure) return;
		try {
			for (const f of followers) f.readNew();
		} catch (error) {
			followFailure = error instanceof Error ? error : new Error(String(error));
		}
	};
	const polling = followers.length ? setInterval(readAll, 20) : null;
	let log = '';
	child.stderr.setEncoding('utf8');
	child.stderr.on('data', (text: string) => {
		log += text;
		if (log.length > 1 << 20) log = log.slice(-(1 << 19));
	});
	const who = paths.length === 1 ? paths[0] : paths.join(', ');
	return new Promise<DecodedPcm[]>((resolve, reject) => {
		child.on('error', (error) => {
			if (polling) clearInterval(polling);
			followers.forEach((f) => f.close());
			removeOutputs();
			reject(new MediaReadError(who, error.name === 'AbortError' ? 'decoding was cancelled' : `ffmpeg did not run: ${error.message}`));
		});
		child.on('close', (code) => {
			if (polling) clearInterval(polling);
			if (code !== 0) {
				followers.forEach((f) => f.close());
				removeOutputs();
				reject(new MediaReadError(who, log.trim().split('\n').pop() || `ffmpeg could not decode its audio (exit ${code})`));
				return;
			}
			readAll();
			followers.forEach((f) => f.close());
			if (followFailure) {
				removeOutputs();
				reject(new MediaReadError(who, `the decoded sound could not be read back: ${followFailure.message}`));
				return;
			}
			try {
				resolve(
					paths.map((source, i) => ({
						source,
						scratchPath: outputPaths[i],
						sampleRate,
						length: Math.floor(statSync(outputPaths[i]).size / 2),
						fullScale: decodedFullScale
					}))
				);
			} catch (error) {
				removeOutputs();
				reject(new MediaReadError(who, `the decoded sound could not be found: ${(error as Error).message}`));
			}
		});
	});
}

/** One buffer for reading sound in passing: reused, it stays in memory that is already mapped. */
const passingBuffer = new Int16Array(1 << 19);

/** Reads what a writer has added to a file since the last call, whole samples only, a buffer at a time. */
class GrowingFileReader {
	private fd: number | null = null;
	private offset = 0;

	constructor(
		private readonly path: string,
		private readonly take: (samples: Int16Array) => void
	) {}

	readNew() {
		if (this.fd === null) {
			try {
				this.fd = openSync(this.path, 'r');
			} catch {
				return; // not created yet
			}
		}
		const bytes = new Uint8Array(passingBuffer.buffer);
		const available = fstatSync(this.fd).size;
		while (available - this.offset >= 2) {
			const wanted = Math.min(bytes.length, (available - this.offset) & ~1);
			let got = 0;
			while (got < wanted) {
				const read = readSync(this.fd, bytes, got, wanted - got, this.offset + got);
				if (read === 0) break;
				got += read;
			}
			const whole = got & ~1;
			if (whole === 0) break;
			this.take(passingBuffer.subarray(0, whole / 2));
			this.offset += whole;
		}
	}

	close() {
		if (this.fd !== null) closeSync(this.fd);
		this.fd = null;
	}
}

/**
 * Fills `samples` from a scratch file, starting at sample `firstSample`. The machine's byte order
 * is little-endian (x64, arm64), as the files are.
 */
export function readSamplesAt(fd: number, samples: Int16Array, firstSample: number) {
	const bytes = new Uint8Array(samples.buffer, samples.byteOffset, samples.byteLength);
	for (let offset = 0; offset < bytes.length; ) {
		const read = readSync(fd, bytes, offset, Math.min(1 << 26, bytes.length - offset), firstSample * 2 + offset);
		if (read === 0) throw new Error('the decoded sound ended early');
		offset += read;
	}
}

/** A whole scratch file in memory. */
function readSamples(filePath: string): Int16Array {
	const fd = openSync(filePath, 'r');
	try {
		const samples = new Int16Array(fstatSync(fd).size >> 1);
		readSamplesAt(fd, samples, 0);
		return samples;
	} finally {
		closeSync(fd);
	}
}
