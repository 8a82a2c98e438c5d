import { execFile } from 'node:child_process';
import { access, mkdir, readFile, rename, rm } from 'node:fs/promises';
import { join } from 'node:path';
import { promisify } from 'node:util';
import { frameCountOf, frameTimeSeconds, type FrameTiming } from '$lib/sync/frames';
import type { Rational } from '$lib/sync/rational';
import { frameTimingOfStored } from '$lib/sync/timing-table';
import type { Clip } from '../db/schema';
import { newId } from '../ids';
import { Refusal } from '../refusal';
import { derivedDir } from '../storage';
import { mediaBinaries } from './binaries';

const run = promisify(execFile);

/** Reviewers compare frames side by side; small images keep a page of them light. */
export const FRAME_GRAB_WIDTH = 320;

export type FrameImageFormat = 'jpeg' | 'png';
export const FRAME_CONTENT_TYPES: Record<FrameImageFormat, string> = { jpeg: 'image/jpeg', png: 'image/png' };

/** A stored clip's frame timing (real timestamps for variable timing), or null when it has no video frames. */
export async function frameTimingOfClip(clip: Clip): Promise<{ frames: FrameTiming; frameRate: Rational } | null> {
	let frameTimes: number[] | null = null;
	if (clip.variableFrameRate && clip.frameTimesPath) frameTimes = JSON.parse(await readFile(clip.frameTimesPath, 'utf8')) as number[];
	return frameTimingOfStored(clip, frameTimes);
}

/** Runs of the same grab share one ffmpeg. */
const inFlight = new Map<string, Promise<string>>();

/**
 * The file of frame `index` of a clip as a small image, cut by ffmpeg at the frame's
 * presentation timestamp and cached under the clip's derived folder.
 */
export async function frameGrab(clip: Clip, index: number, format: FrameImageFormat): Promise<string> {
	if (clip.state !== 'ready') throw new Refusal('not_ready', 'This clip is still being probed.', 409);
	const timing = await frameTimingOfClip(clip);
	if (!timing) throw new Refusal('no_video', 'This clip has no video frames.', 409);
	const count = frameCountOf(timing.frames);
	if (!Number.isInteger(index) || index < 0 || index >= count) {
		throw new Refusal('frame_out_of_range', `This clip has frames 0–${count - 1}; there is no frame ${index}.`, 404);
	}
	const dir = join(await derivedDir(clip.id), 'frames');
	const path = join(dir, `${index}-w${FRAME_GRAB_WIDTH}.${format === 'png' ? 'png' : 'jpg'}`);
	try {
		await access(path);
		return path;
	} catch {
		// not cached yet
	}
	let running = inFlight.get(path);
	if (!running) {
		running = cut(clip.storagePath, timing.frames, index, dir, path, format).finally(() => inFlight.delete(path));
		inFlight.set(path, running);
	}
	return running;
}

async function cut(source: string, frames: FrameTiming, index: number, dir: string, path: string, format: FrameImageFormat): Promise<string> {
	const pts = frameTimeSeconds(index, frames);
	const previous = index > 0 ? frameTimeSeconds(index - 1, frames) : pts - (frameTimeSeconds(Math.min(1, frameCountOf(frames) - 1), frames) - pts || 0.02);
	// Start half a frame early: the accurate seek drops every frame before that point, so the
	// first frame left is the one presented at `pts`, whatever the rate and however uneven.
	const seekSeconds = Math.max(0, pts - (pts - previous) / 2);
	await mkdir(dir, { recursive: true });
	const partial = join(dir, `.${newId()}.${format === 'png' ? 'png' : 'jpg'}`);
	const args = [
		'-v', 'error', '-nostdin', '-y',
		// Seek by the container's own timestamps (clip time), not relative to its start time.
		'-seek_timestamp', '1',
		'-ss', seekSeconds.toFixed(6),
		'-i', source,
		'-map', '0:v:0',
		'-frames:v', '1',
		'-vf', `scale='min(${FRAME_GRAB_WIDTH},iw)':-2:flags=bicubic`,
		...(format === 'png' ? ['-c:v', 'png'] : ['-c:v', 'mjpeg', '-q:v', '4']),
		'-f', 'image2', partial
	];
	try {
		await run(mediaBinaries().ffmpegPath, args, { timeout: 30_000 });
		await access(partial);
		await rename(partial, path);
	} catch (e) {
		await rm(partial, { force: true });
		throw new Refusal('frame_grab_failed', `Could not cut frame ${index} from this clip: ${e instanceof Error ? e.message.split('\n')[0] : String(e)}`, 500);
	}
	return path;
}
