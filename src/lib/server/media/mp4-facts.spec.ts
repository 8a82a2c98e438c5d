import { execFileSync } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, relative } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { rationalEquals, type Rational } from '../../sync/rational';
import { mediaBinaries } from './binaries';
import { inspectMp4, readMp4Facts } from './mp4-facts';
import { probeMedia, type MediaProbe } from './probe';

// ffprobe, through probeMedia, is the reference throughout: whenever readMp4Facts answers, its
// answer must be what probeMedia says. Times may differ by 1 µs (ffprobe prints six decimals);
// frame rates, counts, sizes and names must be equal.

const fixturesDir = fileURLToPath(new URL('../../../../fixtures', import.meta.url));
const mp4Extensions = /\.(mp4|m4a|mov)$/i;

/** Every MP4/M4A/MOV under fixtures/, including bad/, upload/ and generated/ when present. */
function fixtureFiles(dir: string): string[] {
	return readdirSync(dir, { withFileTypes: true })
		.flatMap((entry) => {
			const path = join(dir, entry.name);
			// generated/ may be a link to a checkout that holds the large cases.
			const isFolder = entry.isDirectory() || (entry.isSymbolicLink() && statSync(path).isDirectory());
			return isFolder ? fixtureFiles(path) : mp4Extensions.test(entry.name) ? [path] : [];
		})
		.sort();
}

function sameTime(mine: number | null, reference: number | null): boolean {
	if (mine === null || reference === null) return mine === reference;
	return Math.abs(mine - reference) <= 1e-6 + 1e-12;
}

function sameRate(mine: Rational | null, reference: Rational | null): boolean {
	if (mine === null || reference === null) return mine === reference;
	return rationalEquals(mine, reference);
}

/** The fields that differ, with both values; empty when the facts agree. */
function differences(mine: MediaProbe, reference: MediaProbe): string[] {
	const found: string[] = [];
	const check = (field: string, same: boolean, a: unknown, b: unknown) => {
		if (!same) found.push(`${field}: reader ${JSON.stringify(a)}, ffprobe ${JSON.stringify(b)}`);
	};
	const exact = (field: string, a: unknown, b: unknown) => check(field, a === b, a, b);
	const time = (field: string, a: number | null, b: number | null) => check(field, sameTime(a, b), a, b);
	exact('path', mine.path, reference.path);
	exact('formatName', mine.formatName, reference.formatName);
	time('durationSeconds', mine.durationSeconds, reference.durationSeconds);
	time('startSeconds', mine.startSeconds, reference.startSeconds);
	exact('creationTime', mine.creationTime, reference.creationTime);
	exact('timecode', mine.timecode, reference.timecode);
	exact('has video', !!mine.video, !!reference.video);
	if (mine.video && reference.video) {
		const [a, b] = [mine.video, reference.video];
		exact('video.codec', a.codec, b.codec);
		exact('video.width', a.width, b.width);
		exact('video.height', a.height, b.height);
		exact('video.rotationDegrees', a.rotationDegrees, b.rotationDegrees);
		check('video.frameRate', sameRate(a.frameRate, b.frameRate), a.frameRate, b.frameRate);
		check('video.averageFrameRate', sameRate(a.averageFrameRate, b.averageFrameRate), a.averageFrameRate, b.averageFrameRate);
		time('video.startSeconds', a.startSeconds, b.startSeconds);
		time('video.durationSeconds', a.durationSeconds, b.durationSeconds);
		exact('video.frameCount', a.frameCount, b.frameCount);
		exact('video.variableFrameRate', a.variableFrameRate, b.variableFrameRate);
		exact('video.frameTimesSeconds', a.frameTimesSeconds, b.frameTimesSeconds);
	}
	exact('has audio', !!mine.audio, !!reference.audio);
	if (mine.audio && reference.audio) {
		const [a, b] = [mine.audio, reference.audio];
		exact('audio.codec', a.codec, b.codec);
		exact('audio.sampleRate', a.sampleRate, b.sampleRate);
		exact('audio.channels', a.channels, b.channels);
		time('audio.startSeconds', a.startSeconds, b.startSeconds);
		time('audio.durationSeconds', a.durationSeconds, b.durationSeconds);
	}
	return found;
}

async function referenceOrNull(path: string): Promise<MediaProbe | null> {
	try {
		return await probeMedia(path);
	} catch {
		return null;
	}
}

describe('readMp4Facts on the fixtures', () => {
	it.each(fixtureFiles(fixturesDir).map((path) => [relative(fixturesDir, path), path]))('%s: same facts as ffprobe, or none', async (_name, path) => {
		const [mine, reference] = await Promise.all([readMp4Facts(path), referenceOrNull(path)]);
		if (!reference) expect(mine).toBeNull();
		else expect(mine ? differences(mine, reference) : []).toEqual([]);
	});

	it('answers for the committed camera clips, and declines the phone with variable frame timing', async () => {
		// The engine's usual input: if these fell back to ffprobe the reader would save nothing.
		for (const name of ['fountain-lap/high.mp4', 'fountain-lap/mid.mp4', 'fountain-lap/low.mp4', 'late-start/cam-c.mp4', 'vfr-phone/action.mp4']) {
			expect(await inspectMp4(join(fixturesDir, name)), name).toHaveProperty('facts');
		}
		const phone = join(fixturesDir, 'vfr-phone/phone.mp4');
		const inspection = await inspectMp4(phone);
		expect(inspection).toMatchObject({ declined: 'variable frame timing' });
		// Declined, it still tells the movie's length (for planning the decodes): ffprobe's format duration.
		const reference = await probeMedia(phone);
		expect('movieSeconds' in inspection && inspection.movieSeconds).toBeCloseTo(reference.durationSeconds, 6);
	});
});

/** Offset and size of each top-level box, in file order. */
function topLevelBoxes(bytes: Buffer): { type: string; offset: number; size: number }[] {
	const boxes: { type: string; offset: number; size: number }[] = [];
	for (let offset = 0; offset < bytes.length; ) {
		const size = bytes.readUInt32BE(offset);
		boxes.push({ type: bytes.toString('latin1', offset + 4, offset + 8), offset, size });
		offset += size;
	}
	return boxes;
}

/** Offsets of the boxes along `path` below `start`..`end`, taking the first box of each type. */
function boxPath(bytes: Buffer, start: number, end: number, path: string[]): { offset: number; size: number }[] {
	const found: { offset: number; size: number }[] = [];
	let [from, to] = [start, end];
	for (const type of path) {
		let offset = from;
		while (offset < to && bytes.toString('latin1', offset + 4, offset + 8) !== type) offset += bytes.readUInt32BE(offset);
		if (offset >= to) throw new Error(`no ${type} box`);
		const size = bytes.readUInt32BE(offset);
		found.push({ offset, size });
		[from, to] = [offset + 8, offset + size];
	}
	return found;
}

describe('readMp4Facts on files made here with ffmpeg', () => {
	let dir = '';
	const file = (name: string) => join(dir, name);

	beforeAll(() => {
		dir = mkdtempSync(join(tmpdir(), 'mp4-facts-spec-'));
		const { ffmpegPath } = mediaBinaries();
		const ffmpeg = (args: string[]) => execFileSync(ffmpegPath, ['-v', 'error', '-y', ...args]);
		const picture = (rate: string) => ['-f', 'lavfi', '-i', `testsrc2=s=160x120:r=${rate}:d=2`];
		const tone = (sampleRate: number) => ['-f', 'lavfi', '-i', `sine=f=440:r=${sampleRate}:d=2`];
		const h264Aac = ['-c:v', 'libx264', '-preset', 'ultrafast', '-c:a', 'aac'];

		ffmpeg([...picture('25'), ...tone(48000), ...h264Aac, file('moov-at-end.mp4')]);
		ffmpeg([...picture('25'), ...tone(48000), ...h264Aac, '-movflags', '+faststart', file('faststart.mp4')]);
		ffmpeg([...picture('30000/1001'), ...tone(48000), '-c:v', 'libx264', '-preset', 'medium', '-bf', '3', '-c:a', 'aac', file('ntsc-bframes.mp4')]);
		ffmpeg([...picture('25'), ...tone(44100), '-ac', '2', ...h264Aac, file('stereo-44100.mp4')]);
		ffmpeg([...picture('25'), '-itsoffset', '0.25', ...tone(48000), '-map', '0:v', '-map', '1:a', ...h264Aac, file('audio-offset.mp4')]);
		ffmpeg([...picture('25'), ...tone(48000), '-af', 'adelay=250', ...h264Aac, file('audio-delayed.mp4')]);
		ffmpeg(['-i', file('moov-at-end.mp4'), '-itsoffset', '0.5', '-i', file('ntsc-bframes.mp4'), '-map', '1:v', '-map', '0:a', '-c', 'copy', file('video-late.mp4')]);
		ffmpeg(['-itsoffset', '0.3', '-i', file('moov-at-end.mp4'), '-c', 'copy', file('both-late.mp4')]);
		ffmpeg([...picture('25'), '-c:v', 'libx264', '-preset', 'ultrafast', file('no-audio.mp4')]);
		ffmpeg([...tone(48000), '-c:a', 'aac', file('audio-only.m4a')]);
		ffmpeg([...picture('25'), ...tone(48000), ...h264Aac, '-metadata', 'creation_time=2024-05-01T10:20:30Z', file('created.mp4')]);
		ffmpeg([...picture('50'), ...tone(48000), '-c:v', 'libx265', '-preset', 'ultrafast', '-x265-params', 'log-level=none', '-tag:v', 'hvc1', '-c:a', 'aac', file('hevc.mp4')]);
		ffmpeg([...picture('25'), ...tone(48000), ...h264Aac, '-f', 'mov', file('quicktime.mov')]);
		ffmpeg([...picture('25'), ...tone(48000), ...h264Aac, '-movflags', 'frag_keyframe+empty_moov', file('fragmented.mp4')]);
		ffmpeg([...picture('25'), ...tone(48000), ...h264Aac, file('matroska.mkv')]);
		ffmpeg([...tone(48000), file('sound.wav')]);
		ffmpeg([...picture('25'), ...tone(48000), ...h264Aac, '-timecode', '01:00:00:00', file('timecode.mp4')]);
		// Every seventh frame dropped: the stts gets many entries, as a phone's does.
		ffmpeg([...picture('30'), ...tone(48000), '-vf', 'select=not(eq(mod(n\\,7)\\,3))', '-fps_mode', 'vfr', ...h264Aac, file('variable.mp4')]);

		// ffmpeg 5.1 no longer turns rotate metadata into a matrix, so write the track matrix by hand.
		const plain = readFileSync(file('moov-at-end.mp4'));
		const moov = topLevelBoxes(plain).find((b) => b.type === 'moov');
		if (!moov) throw new Error('no moov');
		const [, , tkhd] = boxPath(plain, moov.offset, moov.offset + moov.size, ['moov', 'trak', 'tkhd']);
		for (const [degrees, [a, b, c, d]] of [[90, [0, 1, -1, 0]], [180, [-1, 0, 0, -1]], [270, [0, -1, 1, 0]]] as const) {
			const rotated = Buffer.from(plain);
			// Version-0 tkhd: the matrix (a b u / c d v / x y w, ISO/IEC 14496-12 8.3.2) starts 40 bytes into the body.
			[a, b, 0, c, d, 0].forEach((value, i) => rotated.writeInt32BE(value * 0x10000, tkhd.offset + 8 + 40 + 4 * i));
			writeFileSync(file(`rotated-${degrees}.mp4`), rotated);
		}

		// The last frame shorter than the rest: stts (n−1, δ), (1, δ′), which ffmpeg still reads as constant.
		// With moov after mdat, the grown moov moves no sample, so only the box sizes change.
		const [, , , , , stts] = boxPath(plain, moov.offset, moov.offset + moov.size, ['moov', 'trak', 'mdia', 'minf', 'stbl', 'stts']);
		if (moov.offset + moov.size !== plain.length || plain.readUInt32BE(stts.offset + 12) !== 1) throw new Error('unexpected layout');
		const frames = plain.readUInt32BE(stts.offset + 16);
		const delta = plain.readUInt32BE(stts.offset + 20);
		const table = Buffer.alloc(32);
		[32, 0x73747473, 0, 2, frames - 1, delta, 1, delta - 1].forEach((value, i) => table.writeUInt32BE(value, 4 * i));
		const grown = Buffer.concat([plain.subarray(0, stts.offset), table, plain.subarray(stts.offset + stts.size)]);
		for (const parent of boxPath(plain, moov.offset, moov.offset + moov.size, ['moov', 'trak', 'mdia', 'minf', 'stbl'])) {
			grown.writeUInt32BE(parent.size + 8, parent.offset);
		}
		writeFileSync(file('short-last-frame.mp4'), grown);
	}, 120_000);

	afterAll(() => {
		if (dir) rmSync(dir, { recursive: true, force: true });
	});

	const answered = [
		'moov-at-end.mp4',
		'faststart.mp4',
		'ntsc-bframes.mp4',
		'stereo-44100.mp4',
		'audio-offset.mp4',
		'audio-delayed.mp4',
		'video-late.mp4',
		'both-late.mp4',
		'no-audio.mp4',
		'audio-only.m4a',
		'created.mp4',
		'hevc.mp4',
		'quicktime.mov',
		'rotated-90.mp4',
		'rotated-180.mp4',
		'rotated-270.mp4',
		'short-last-frame.mp4'
	];

	it.each(answered)('%s: the same facts as ffprobe', async (name) => {
		const [inspection, reference] = await Promise.all([inspectMp4(file(name)), probeMedia(file(name))]);
		expect(inspection).toHaveProperty('facts');
		if ('facts' in inspection) expect(differences(inspection.facts, reference)).toEqual([]);
	});

	// The values below are what the files were made with (ffmpeg arguments above); the test before
	// this one already compared each file with ffprobe, so these only show the cases are really covered.
	it('covers what it claims to: layouts, rates, late starts, rotation, creation time', async () => {
		const order = (name: string) => topLevelBoxes(readFileSync(file(name))).map((b) => b.type).filter((t) => t === 'moov' || t === 'mdat');
		expect(order('moov-at-end.mp4')).toEqual(['mdat', 'moov']);
		expect(order('faststart.mp4')).toEqual(['moov', 'mdat']);
		const probe = async (name: string) => {
			const facts = await readMp4Facts(file(name));
			if (!facts) throw new Error(`${name} declined`);
			return facts;
		};
		expect((await probe('moov-at-end.mp4')).video?.frameRate).toEqual({ num: 25, den: 1 });
		expect((await probe('ntsc-bframes.mp4')).video?.frameRate).toEqual({ num: 30000, den: 1001 });
		expect((await probe('stereo-44100.mp4')).audio).toMatchObject({ sampleRate: 44100, channels: 2 });
		expect((await probe('audio-offset.mp4')).audio?.startSeconds).toBeGreaterThan(0.2);
		expect((await probe('video-late.mp4')).video?.startSeconds).toBeCloseTo(0.5, 6);
		expect((await probe('both-late.mp4')).startSeconds).toBeGreaterThan(0.2);
		expect((await probe('no-audio.mp4')).audio).toBeNull();
		expect((await probe('audio-only.m4a')).video).toBeNull();
		expect((await probe('created.mp4')).creationTime).toBe('2024-05-01T10:20:30.000000Z');
		expect((await probe('hevc.mp4')).video?.codec).toBe('hevc');
		// ffprobe prints rotation -90 for the matrix (0 1 / -1 0) (av_display_rotation_get), which probeMedia folds to 270.
		expect((await probe('rotated-90.mp4')).video?.rotationDegrees).toBe(270);
		expect((await probe('rotated-270.mp4')).video?.rotationDegrees).toBe(90);
		// 2 s at 25 fps; the shorter last frame changes neither the count nor the base rate.
		expect((await probe('short-last-frame.mp4')).video).toMatchObject({ frameCount: 50, frameRate: { num: 25, den: 1 } });
	});

	it.each([
		['fragmented.mp4', /fragmented/],
		['matroska.mkv', /not an ISO base media file/],
		['sound.wav', /not an ISO base media file/],
		['timecode.mp4', /track reference|tmcd/],
		['variable.mp4', /variable frame timing/]
	])('%s: declines (%s)', async (name, reason) => {
		const inspection = await inspectMp4(file(name));
		expect(inspection).toHaveProperty('declined');
		if ('declined' in inspection) expect(inspection.declined).toMatch(reason);
		expect(await readMp4Facts(file(name))).toBeNull();
	});

	it('declines the variable-rate file that ffprobe, too, finds variable', async () => {
		const reference = await probeMedia(file('variable.mp4'));
		expect(reference.video?.variableFrameRate).toBe(true);
	});
});
