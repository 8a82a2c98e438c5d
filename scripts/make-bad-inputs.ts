/*
 * Small media files for the ingest tests (npx tsx scripts/make-bad-inputs.ts):
 *   fixtures/bad/     one file per kind of input Lockstep refuses or flags
 *   fixtures/upload/  two short, valid camera clips with sound, for upload tests
 * The outputs are committed; run this again only to change them.
 */
import { execFileSync } from 'node:child_process';
import { mkdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { mediaBinaries } from '../src/lib/server/media/binaries';

const BAD = 'fixtures/bad';
const UPLOAD = 'fixtures/upload';

function ffmpeg(args: string[]): void {
	execFileSync(mediaBinaries().ffmpegPath, ['-hide_banner', '-loglevel', 'error', '-y', ...args], { stdio: 'inherit' });
}

/** A short test-pattern clip with a tone, at the given rate; `tone` keeps each clip's bytes distinct. */
function clip(path: string, opts: { rate: string; seconds: number; tone: number; audio?: boolean; faststart?: boolean; quality?: number }): void {
	const video = ['-f', 'lavfi', '-i', `testsrc2=size=320x240:rate=${opts.rate}:duration=${opts.seconds}`];
	const audio = opts.audio === false ? [] : ['-f', 'lavfi', '-i', `sine=frequency=${opts.tone}:sample_rate=48000:duration=${opts.seconds}`];
	ffmpeg([
		...video,
		...audio,
		'-c:v', 'libx264', '-preset', 'veryfast', '-crf', String(opts.quality ?? 28), '-pix_fmt', 'yuv420p',
		...(opts.audio === false ? [] : ['-c:a', 'aac', '-b:a', '96k']),
		'-map_metadata', '-1', '-fflags', '+bitexact', '-flags:v', '+bitexact', '-flags:a', '+bitexact',
		...(opts.faststart ? ['-movflags', '+faststart'] : []),
		path
	]);
}

/** Overwrites every 'avc1' sample-entry fourcc with one no decoder knows. */
function patchFourcc(path: string, from: string, to: string): void {
	const bytes = readFileSync(path);
	const needle = Buffer.from(from, 'latin1');
	let at = bytes.indexOf(needle);
	let patched = 0;
	while (at >= 0) {
		// The sample entry sits inside 'stsd'; the 'avc1' brand in 'ftyp' is left alone.
		if (bytes.subarray(Math.max(0, at - 16), at).includes(Buffer.from('stsd', 'latin1'))) {
			bytes.write(to, at, 'latin1');
			patched++;
		}
		at = bytes.indexOf(needle, at + 4);
	}
	if (patched === 0) throw new Error(`no ${from} sample entry found in ${path}`);
	writeFileSync(path, bytes);
}

rmSync(BAD, { recursive: true, force: true });
rmSync(UPLOAD, { recursive: true, force: true });
mkdirSync(BAD, { recursive: true });
mkdirSync(UPLOAD, { recursive: true });

writeFileSync(join(BAD, 'empty.mp4'), '');
writeFileSync(join(BAD, 'notes.mp4'), 'Shot list, Market Square: lap 1 high/mid/low, lap 2 repeat.\n');

// The index (moov) in front, so the cut leaves a header that promises frames the file lacks.
const whole = join(BAD, 'whole.tmp.mp4');
clip(whole, { rate: '30', seconds: 2, tone: 523, faststart: true });
const wholeBytes = readFileSync(whole);
writeFileSync(join(BAD, 'truncated.mp4'), wholeBytes.subarray(0, Math.floor(wholeBytes.length * 0.6)));
rmSync(whole);

ffmpeg(['-f', 'lavfi', '-i', 'sine=frequency=330:sample_rate=48000:duration=2', '-c:a', 'aac', '-b:a', '64k', '-map_metadata', '-1', '-fflags', '+bitexact', join(BAD, 'audio-only.m4a')]);
clip(join(BAD, 'no-audio.mp4'), { rate: '25', seconds: 2, tone: 0, audio: false });

const unknown = join(BAD, 'unknown-codec.mp4');
clip(unknown, { rate: '25', seconds: 1, tone: 660 });
patchFourcc(unknown, 'avc1', 'qx7z');

// Valid clips: a 59.94 fps and a 25 fps camera, about half a megabyte each so uploads take
// several chunks at the test server's small chunk size.
clip(join(UPLOAD, 'cam-high-5994.mp4'), { rate: '60000/1001', seconds: 3, tone: 440, quality: 18 });
clip(join(UPLOAD, 'cam-low-25.mp4'), { rate: '25', seconds: 3, tone: 880, quality: 16 });

for (const dir of [BAD, UPLOAD]) {
	for (const name of execFileSync('ls', [dir], { encoding: 'utf8' }).trim().split('\n')) {
		console.log(`${join(dir, name)}  ${statSync(join(dir, name)).size} bytes`);
	}
}
