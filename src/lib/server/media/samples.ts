import { spawn } from 'node:child_process';
import { mediaBinaries } from './binaries';
import { Refusal } from '../refusal';

/*
 * The clip's own samples for a short window, for the workbench's deepest zoom where a peak
 * bucket would hold under a few samples. Decoded from the original (as the peaks are), so a
 * sample here is the sample the peaks summarise: mono, at the clip's own rate, sample k at
 * clip time k / rate.
 */

/** At most this many samples in one answer: a little over half a second at 48 kHz. */
export const MAX_SAMPLE_WINDOW = 32768;
/** Decoding starts this far before the window so the codec's overlap state has settled by its first sample. */
const PREROLL_SECONDS = 0.1;

export interface SampleWindow {
	sampleRate: number;
	/** Index of the first sample (clip time startSample / sampleRate). */
	startSample: number;
	startSeconds: number;
	samples: number[];
}

/** The sample indices [first, end) covering [startSeconds, endSeconds), or a refusal that says what to ask for. */
export function sampleRange(sampleRate: number, durationSeconds: number, startSeconds: number, endSeconds: number): { first: number; end: number } {
	if (!(endSeconds > startSeconds)) throw new Refusal('invalid_input', 'end must be after start.', 400);
	if (startSeconds >= durationSeconds) {
		throw new Refusal('invalid_input', `start is past the end of the clip (${durationSeconds.toFixed(3)} s).`, 400);
	}
	const first = Math.floor(startSeconds * sampleRate);
	const end = Math.min(Math.ceil(endSeconds * sampleRate), Math.ceil(durationSeconds * sampleRate));
	if (end - first > MAX_SAMPLE_WINDOW) {
		const most = MAX_SAMPLE_WINDOW / sampleRate;
		throw new Refusal('window_too_long', `Ask for at most ${MAX_SAMPLE_WINDOW} samples at a time (${most.toFixed(3)} s at ${sampleRate} Hz); use the peaks for longer windows.`, 400);
	}
	return { first, end };
}

/** ffmpeg arguments for samples [first, end) of the first audio stream, mono float32 at `sampleRate`. */
export function sampleWindowArguments(mediaPath: string, sampleRate: number, first: number, end: number): string[] {
	const preroll = Math.min(first, Math.round(PREROLL_SECONDS * sampleRate));
	const decodeFrom = first - preroll;
	return [
		'-nostdin', '-v', 'error',
		// Seek near the window, keep the container's timestamps, and tell the resampler which sample
		// the output starts at: it pads or trims to that, as the peaks' decode does from 0.
		'-ss', String(decodeFrom / sampleRate), '-copyts', '-i', mediaPath,
		'-map', '0:a:0', '-vn', '-sn', '-dn',
		'-af', `aresample=${sampleRate}:async=1:first_pts=${decodeFrom},atrim=start_sample=${preroll}:end_sample=${preroll + end - first}`,
		'-ac', '1', '-ar', String(sampleRate),
		'-f', 'f32le', 'pipe:1'
	];
}

export async function readSampleWindow(
	mediaPath: string,
	sampleRate: number,
	durationSeconds: number,
	startSeconds: number,
	endSeconds: number,
	signal?: AbortSignal
): Promise<SampleWindow> {
	const { first, end } = sampleRange(sampleRate, durationSeconds, startSeconds, endSeconds);
	const child = spawn(mediaBinaries().ffmpegPath, sampleWindowArguments(mediaPath, sampleRate, first, end), { stdio: ['ignore', 'pipe', 'pipe'], signal });
	const chunks: Buffer[] = [];
	let stderr = '';
	child.stdout.on('data', (chunk: Buffer) => chunks.push(chunk));
	child.stderr.setEncoding('utf8');
	child.stderr.on('data', (t: string) => (stderr = (stderr + t).slice(-2000)));
	await new Promise<void>((resolve, reject) => {
		// A caller that went away is not a server fault: answered as a refusal nobody will read (499, as nginx logs it).
		child.on('error', (err) => reject(signal?.aborted ? new Refusal('cancelled', 'The request was cancelled before the samples were decoded.', 499) : err));
		child.on('close', (code) => (code === 0 ? resolve() : reject(new Error(`ffmpeg could not decode the window: ${stderr.trim().split('\n').pop() ?? code}`))));
	});
	const bytes = Buffer.concat(chunks);
	const values = new Float32Array(bytes.buffer, bytes.byteOffset, Math.floor(bytes.length / 4));
	return {
		sampleRate,
		startSample: first,
		startSeconds: first / sampleRate,
		// Five decimals keep 16-bit sources exact to within a step (1/32768 ≈ 3e-5) at half the JSON.
		samples: Array.from(values.subarray(0, end - first), (v) => Math.round(v * 100000) / 100000)
	};
}
