import { execFile } from 'node:child_process';
import { promisify } from 'node:util';
import { parseRational, rationalToNumber, type Rational } from '../../sync/rational';
import { mediaBinaries } from './binaries';

const run = promisify(execFile);

/** A file that cannot be read as media, with one line saying why. */
export class MediaReadError extends Error {
	constructor(
		readonly path: string,
		readonly reason: string
	) {
		super(`${path}: ${reason}`);
		this.name = 'MediaReadError';
	}
}

export interface VideoStreamProbe {
	codec: string;
	width: number;
	height: number;
	rotationDegrees: number;
	/** ffprobe's r_frame_rate: the base rate of the timestamps. */
	frameRate: Rational | null;
	/** ffprobe's avg_frame_rate: frames ÷ duration. */
	averageFrameRate: Rational | null;
	startSeconds: number;
	durationSeconds: number | null;
	frameCount: number | null;
	variableFrameRate: boolean;
	/** Presentation times of every frame, in order; read only when the timing is not constant. */
	frameTimesSeconds: Float64Array | null;
}

export interface AudioStreamProbe {
	codec: string;
	sampleRate: number;
	channels: number;
	startSeconds: number;
	durationSeconds: number | null;
}

export interface MediaProbe {
	path: string;
	formatName: string;
	durationSeconds: number;
	startSeconds: number;
	creationTime: string | null;
	timecode: string | null;
	video: VideoStreamProbe | null;
	audio: AudioStreamProbe | null;
}

interface FfprobeStream {
	index?: number;
	codec_type?: string;
	codec_name?: string;
	width?: number;
	height?: number;
	r_frame_rate?: string;
	avg_frame_rate?: string;
	start_time?: string;
	duration?: string;
	nb_frames?: string;
	sample_rate?: string;
	channels?: number;
	tags?: Record<string, string>;
	side_data_list?: { rotation?: number | string }[];
	disposition?: { attached_pic?: number };
}

interface FfprobeOutput {
	format?: { format_name?: string; duration?: string; start_time?: string; tags?: Record<string, string> };
	streams?: FfprobeStream[];
}

function numberOr<T>(text: string | number | undefined, fallback: T): number | T {
	const value = typeof text === 'number' ? text : text === undefined ? Number.NaN : Number(text);
	return Number.isFinite(value) ? value : fallback;
}

function tag(tags: Record<string, string> | undefined, name: string): string | null {
	if (!tags) return null;
	const key = Object.keys(tags).find((k) => k.toLowerCase() === name);
	return key ? tags[key] : null;
}

function rotationOf(stream: FfprobeStream): number {
	const fromSideData = stream.side_data_list?.find((d) => d.rotation !== undefined)?.rotation;
	const degrees = numberOr(fromSideData ?? tag(stream.tags, 'rotate') ?? undefined, 0);
	return ((Math.round(degrees) % 360) + 360) % 360;
}

async function ffprobeJson(path: string, args: string[]): Promise<string> {
	try {
		const { stdout } = await run(mediaBinaries().ffprobePath, ['-v', 'error', ...args, path], { maxBuffer: 256 * 1024 * 1024 });
		return stdout;
	} catch (error) {
		const stderr = error instanceof Error && 'stderr' in error && typeof error.stderr === 'string' ? error.stderr.trim().split('\n').pop() : undefined;
		throw new MediaReadError(path, stderr || 'ffprobe could not read it');
	}
}

/** Presentation times of the first video stream's packets, sorted: presentation order. */
export async function readFrameTimes(path: string): Promise<Float64Array> {
	const text = await ffprobeJson(path, ['-select_streams', 'v:0', '-show_entries', 'packet=pts_time', '-of', 'csv=p=0']);
	const times = text
		.split('\n')
		.map((line) => line.split(',')[0].trim())
		.filter((field) => field !== '' && field !== 'N/A')
		.map(Number)
		.filter(Number.isFinite);
	return Float64Array.from(times).sort();
}

/** True when frame intervals differ by more than timestamp rounding allows. */
export function isVariableTiming(times: Float64Array, frameRate: Rational | null): boolean {
	if (times.length < 3) return false;
	const nominal = frameRate ? 1 / rationalToNumber(frameRate) : (times[times.length - 1] - times[0]) / (times.length - 1);
	let worst = 0;
	for (let i = 1; i < times.length; i++) worst = Math.max(worst, Math.abs(times[i] - times[i - 1] - nominal));
	// Timestamps are rounded to the container's time base; a tenth of a frame is far beyond that.
	return worst > nominal * 0.1;
}

export interface ProbeOptions {
	/** 'auto' reads frame timestamps only when the stream looks variable; 'always' checks every file. */
	frameTimes?: 'auto' | 'always' | 'never';
}

export async function probeMedia(path: string, options: ProbeOptions = {}): Promise<MediaProbe> {
	// Asked for every file's frame times, both reads run at once instead of one after the other.
	const frameTimesRead = options.frameTimes === 'always' ? readFrameTimes(path) : null;
	frameTimesRead?.catch(() => {}); // a file ffprobe cannot read fails below, with the description's error
	const text = await ffprobeJson(path, ['-print_format', 'json', '-show_format', '-show_streams']);
	let parsed: FfprobeOutput;
	try {
		parsed = JSON.parse(text) as FfprobeOutput;
	} catch {
		throw new MediaReadError(path, 'ffprobe gave no readable description');
	}
	const streams = parsed.streams ?? [];
	const videoStream = streams.find((s) => s.codec_type === 'video' && !s.disposition?.attached_pic);
	const audioStream = streams.find((s) => s.codec_type === 'audio');
	if (!videoStream && !audioStream) throw new MediaReadError(path, 'no audio or video stream');
	const format = parsed.format ?? {};
	const startSeconds = numberOr(format.start_time, 0);
	const durationSeconds = numberOr(format.duration, numberOr(audioStream?.duration ?? videoStream?.duration, 0));

	let video: VideoStreamProbe | null = null;
	if (videoStream) {
		const frameRate = parseRational(videoStream.r_frame_rate);
		const averageFrameRate = parseRational(videoStream.avg_frame_rate);
		const frameCount = numberOr(videoStream.nb_frames, null);
		const streamDuration = numberOr(videoStream.duration, null);
		const rateDisagrees =
			!!frameRate && !!averageFrameRate && Math.abs(rationalToNumber(frameRate) / rationalToNumber(averageFrameRate) - 1) > 1e-3;
		const countDisagrees =
			!!frameRate && frameCount !== null && streamDuration !== null && Math.abs(frameCount - streamDuration * rationalToNumber(frameRate)) > 1.5;
		const check = options.frameTimes ?? 'auto';
		let frameTimesSeconds: Float64Array | null = null;
		let variableFrameRate = false;
		if (check === 'always' || (check === 'auto' && (rateDisagrees || countDisagrees || !frameRate))) {
			const times = await (frameTimesRead ?? readFrameTimes(path));
			variableFrameRate = isVariableTiming(times, averageFrameRate ?? frameRate);
			if (variableFrameRate) frameTimesSeconds = times;
		}
		video = {
			codec: videoStream.codec_name ?? 'unknown',
			width: videoStream.width ?? 0,
			height: videoStream.height ?? 0,
			rotationDegrees: rotationOf(videoStream),
			frameRate,
			averageFrameRate,
			startSeconds: numberOr(videoStream.start_time, startSeconds),
			durationSeconds: streamDuration,
			frameCount: frameTimesSeconds ? frameTimesSeconds.length : frameCount,
			variableFrameRate,
			frameTimesSeconds
		};
	}
	const audio: AudioStreamProbe | null = audioStream
		? {
				codec: audioStream.codec_name ?? 'unknown',
				sampleRate: numberOr(audioStream.sample_rate, 0),
				channels: audioStream.channels ?? 0,
				startSeconds: numberOr(audioStream.start_time, startSeconds),
				durationSeconds: numberOr(audioStream.duration, null)
			}
		: null;
	const timecodeStream = streams.find((s) => tag(s.tags, 'timecode'));
	return {
		path,
		formatName: format.format_name ?? 'unknown',
		durationSeconds,
		startSeconds,
		creationTime: tag(format.tags, 'creation_time') ?? tag(videoStream?.tags, 'creation_time') ?? tag(audioStream?.tags, 'creation_time'),
		timecode: tag(format.tags, 'timecode') ?? (timecodeStream ? tag(timecodeStream.tags, 'timecode') : null),
		video,
		audio
	};
}
