import { open, type FileHandle } from 'node:fs/promises';
import { rational, rationalToNumber, type Rational } from '../../sync/rational';
import type { AudioStreamProbe, MediaProbe, VideoStreamProbe } from './probe';

/**
 * The facts `probeMedia` gives for an MP4/MOV file, read from its `moov` box in JavaScript instead
 * of by starting ffprobe (whose start-up alone costs about a tenth of a second of CPU per clip).
 *
 * Every value is the one ffprobe (ffmpeg 5.1's mov demuxer) reports, with `probeMedia`'s default
 * options. Whenever the file has anything this reader does not follow exactly (fragments, several
 * edits, variable frame timing, a timecode track, an unusual AAC configuration, ...) it declines
 * with null and the caller asks ffprobe.
 */
export async function readMp4Facts(path: string): Promise<MediaProbe | null> {
	const inspection = await inspectMp4(path);
	return 'facts' in inspection ? inspection.facts : null;
}

/**
 * A declined file still says how long the movie is when its header was read: enough to plan
 * work by (which clips share an ffmpeg run), not to report.
 */
export type Mp4Inspection = { facts: MediaProbe } | { declined: string; movieSeconds?: number };

/** Like `readMp4Facts`, but says why it declined. */
export async function inspectMp4(path: string): Promise<Mp4Inspection> {
	let file: FileHandle | undefined;
	try {
		file = await open(path, 'r');
		const movie = await loadMovie(file, await findMovieBox(file));
		return { facts: factsFromMovie(path, movie) };
	} catch (error) {
		if (error instanceof Declined) return { declined: error.message, ...(error.movieSeconds !== undefined ? { movieSeconds: error.movieSeconds } : {}) };
		return { declined: `unreadable: ${error instanceof Error ? error.message : String(error)}` };
	} finally {
		await file?.close();
	}
}

/** What ffprobe calls the mov demuxer, whatever the file's brand. */
const movFormatName = 'mov,mp4,m4a,3gp,3g2,mj2';

class Declined extends Error {
	movieSeconds?: number;
}

function decline(reason: string): never {
	throw new Declined(reason);
}

// ffmpeg's mov_probe takes a file that starts with one of these; other first boxes may be read by another demuxer.
const firstBoxTypes = new Set(['ftyp', 'moov', 'mdat', 'free', 'skip', 'wide']);
const ignoredTopLevelTypes = new Set(['mdat', 'free', 'skip', 'wide', 'uuid', 'pdin', 'junk']);
const fragmentTypes = new Set(['moof', 'mfra', 'sidx', 'styp', 'ssix', 'emsg', 'prft']);
// ffmpeg scores these ftyp brands as JPEG 2000, not as a movie.
const stillImageBrands = new Set(['jp2 ', 'jpx ']);
const largestMovieBoxBytes = 256 * 1024 * 1024;

/** Walks the top-level boxes by their headers (never reading `mdat`) and says where the body of `moov` lies. */
async function findMovieBox(file: FileHandle): Promise<{ offset: number; bytes: number }> {
	const { size: fileBytes } = await file.stat();
	const header = Buffer.alloc(16);
	let position = 0;
	let movie: { offset: number; bytes: number } | null = null;
	while (position < fileBytes) {
		if (fileBytes - position < 8) decline('bytes after the last box');
		const { bytesRead } = await file.read(header, 0, 16, position);
		let boxBytes = header.readUInt32BE(0);
		const type = header.toString('latin1', 4, 8);
		let headerBytes = 8;
		if (boxBytes === 1) {
			if (bytesRead < 16) decline(`${type} box header cut short`);
			const largeSize = header.readBigUInt64BE(8);
			if (largeSize > BigInt(Number.MAX_SAFE_INTEGER)) decline(`${type} box too large`);
			boxBytes = Number(largeSize);
			headerBytes = 16;
		} else if (boxBytes === 0) {
			boxBytes = fileBytes - position;
		}
		if (position === 0) {
			if (!firstBoxTypes.has(type)) decline('not an ISO base media file');
			if (type === 'ftyp' && stillImageBrands.has(header.toString('latin1', 8, 12))) decline('a JPEG 2000 image');
		} else if (type === 'ftyp') {
			decline('ftyp box after the start');
		}
		if (boxBytes < headerBytes || position + boxBytes > fileBytes) decline(`${printable(type)} box runs past the end of the file`);
		if (type === 'moov') {
			if (movie) decline('two moov boxes');
			if (boxBytes > largestMovieBoxBytes) decline('moov box too large');
			movie = { offset: position + headerBytes, bytes: boxBytes - headerBytes };
		} else if (fragmentTypes.has(type)) {
			decline('fragmented movie');
		} else if (type !== 'ftyp' && !ignoredTopLevelTypes.has(type)) {
			decline(`top-level ${printable(type)} box`);
		}
		position += boxBytes;
	}
	if (!movie) decline('no moov box');
	return movie;
}

/**
 * The body of `moov`, of which only what the facts need has been read. The sample tables of a long
 * clip take megabytes (sizes, chunk offsets, composition offsets) of which only the first bytes
 * matter here, and on this machine faulting in fresh pages for them costs more than all the rest.
 */
class Movie {
	readonly view: DataView;
	private readonly bytes: Buffer;
	/** Loaded byte ranges [start, end) of the body. */
	private readonly loaded: [number, number][] = [];

	constructor(
		private readonly file: FileHandle,
		private readonly fileOffset: number,
		readonly length: number
	) {
		// Unsafe: only loaded ranges are ever read (see `require`), and untouched pages cost nothing.
		this.bytes = Buffer.allocUnsafe(length);
		this.view = new DataView(this.bytes.buffer, this.bytes.byteOffset, length);
	}

	covers(start: number, end: number): boolean {
		return this.loaded.some(([a, b]) => a <= start && end <= b);
	}

	/** Reads [start, end), and the rest of a page-sized window after it, unless already read. */
	async load(start: number, end: number): Promise<void> {
		const to = Math.min(this.length, Math.max(end, start + loadWindowBytes));
		if (start >= to || this.covers(start, Math.min(end, this.length))) return;
		const { bytesRead } = await this.file.read(this.bytes, start, to - start, this.fileOffset + start);
		if (bytesRead !== to - start) decline('moov box cut short');
		this.loaded.push([start, to]);
	}

	/** Declines unless [start, end) was loaded: the parser never reads bytes that were skipped. */
	require(start: number, end: number): void {
		if (end > this.length || !this.covers(start, end)) decline('moov bytes needed but not read');
	}
}

const loadWindowBytes = 4096;
/** Boxes whose children are walked one by one when they are too large to read whole. */
const walkedContainerTypes = new Set(['trak', 'mdia', 'minf', 'stbl']);
/** Sample tables of which only the first body bytes are read (their header and first entries). */
const tablePrefixBytes = new Map([
	['stsz', 12],
	['stz2', 12],
	['stco', 8],
	['co64', 8],
	['stsc', 8],
	['ctts', 16],
	['stss', 0],
	['stps', 0],
	['sdtp', 0],
	['sbgp', 0],
	['subs', 0],
	['saiz', 0],
	['saio', 0]
]);

async function loadMovie(file: FileHandle, box: { offset: number; bytes: number }): Promise<Movie> {
	const movie = new Movie(file, box.offset, box.bytes);
	await loadChildren(movie, 0, movie.length, null);
	return movie;
}

/**
 * Loads every box header below [start, end) and every box body except the large sample tables.
 * Stops quietly at anything malformed: the parser then finds bytes it needs unread and declines.
 */
async function loadChildren(movie: Movie, start: number, end: number, track: { hasEdits: boolean } | null): Promise<void> {
	let position = start;
	while (position + 8 <= end) {
		await movie.load(position, Math.min(position + 16, end));
		let boxBytes = movie.view.getUint32(position);
		const type = fourcc(movie.view, position + 4);
		let headerBytes = 8;
		if (boxBytes === 1) {
			if (position + 16 > end) return;
			boxBytes = Number(movie.view.getBigUint64(position + 8));
			headerBytes = 16;
		} else if (boxBytes === 0) {
			boxBytes = end - position;
		}
		if (boxBytes < headerBytes || position + boxBytes > end) return;
		const boxEnd = position + boxBytes;
		const prefixBytes = tablePrefixBytes.get(type);
		if (type === 'edts' && track) track.hasEdits = true;
		if (boxBytes <= loadWindowBytes) {
			await movie.load(position, boxEnd);
		} else if (walkedContainerTypes.has(type)) {
			await loadChildren(movie, position + headerBytes, boxEnd, type === 'trak' ? { hasEdits: false } : track);
		} else if (prefixBytes !== undefined && !(type === 'ctts' && !track?.hasEdits)) {
			// Without an edit list a video stream starts at its first composition offset, and
			// ffmpeg's reading of that needs the whole ctts (edts comes before mdia in a trak).
			await movie.load(position, Math.min(position + headerBytes + prefixBytes, boxEnd));
			if (type === 'stsc') await movie.load(boxEnd - 12, boxEnd);
		} else {
			await movie.load(position, boxEnd);
		}
		position = boxEnd;
	}
	if (position < end) await movie.load(position, end);
}

function printable(fourcc: string): string {
	return JSON.stringify(fourcc);
}

/** A box inside the movie box: its type and where its body lies in the movie body. */
interface Box {
	type: string;
	start: number;
	end: number;
}

function fourcc(view: DataView, offset: number): string {
	return String.fromCharCode(view.getUint8(offset), view.getUint8(offset + 1), view.getUint8(offset + 2), view.getUint8(offset + 3));
}

/** The boxes between `start` and `end`, which they must fill exactly. */
function childBoxes(movie: Movie, start: number, end: number): Box[] {
	const { view } = movie;
	const boxes: Box[] = [];
	let position = start;
	while (position < end) {
		if (end - position < 8) {
			movie.require(position, end);
			// QuickTime ends some lists (udta) with a 32-bit zero.
			for (let p = position; p < end; p++) if (view.getUint8(p)) decline('bytes left over inside a box');
			break;
		}
		movie.require(position, Math.min(position + 16, end));
		let boxBytes = view.getUint32(position);
		const type = fourcc(view, position + 4);
		let headerBytes = 8;
		if (boxBytes === 1) {
			const largeSize = view.getBigUint64(position + 8);
			if (largeSize > BigInt(end - position)) decline(`${printable(type)} box runs past its parent`);
			boxBytes = Number(largeSize);
			headerBytes = 16;
		} else if (boxBytes === 0) {
			boxBytes = end - position;
		}
		if (boxBytes < headerBytes || position + boxBytes > end) decline(`${printable(type)} box runs past its parent`);
		boxes.push({ type, start: position + headerBytes, end: position + boxBytes });
		position += boxBytes;
	}
	return boxes;
}

function only(boxes: Box[], type: string, where: string): Box {
	const found = boxes.filter((b) => b.type === type);
	if (found.length !== 1) decline(found.length ? `several ${type} boxes in ${where}` : `no ${type} box in ${where}`);
	return found[0];
}

function optional(boxes: Box[], type: string, where: string): Box | null {
	const found = boxes.filter((b) => b.type === type);
	if (found.length > 1) decline(`several ${type} boxes in ${where}`);
	return found[0] ?? null;
}

/** The one sample-table box of two kinds that say the same thing (32-bit or compact/64-bit): exactly one must be there. */
function eitherBox(tableBoxes: Box[], type: string, alternative: string, what: string): Box {
	const box = optional(tableBoxes, type, 'stbl');
	const other = optional(tableBoxes, alternative, 'stbl');
	if (!box === !other) decline(`${what} missing or given twice`);
	return (box ?? other)!;
}

function requireBytes(box: Box, bytes: number): void {
	if (box.end - box.start < bytes) decline(`${box.type} box too short`);
}

/** The box, after checking that all of it was loaded. */
function whole(movie: Movie, box: Box): Box {
	movie.require(box.start, box.end);
	return box;
}

/** A 64-bit field as a number, declining values a double cannot hold exactly. */
function safeUint64(view: DataView, offset: number): number {
	const value = view.getBigUint64(offset);
	if (value > BigInt(Number.MAX_SAFE_INTEGER)) decline('a 64-bit field beyond 2^53');
	return Number(value);
}

function safeInt64(view: DataView, offset: number): number {
	const value = view.getBigInt64(offset);
	if (value > BigInt(Number.MAX_SAFE_INTEGER) || value < BigInt(Number.MIN_SAFE_INTEGER)) decline('a 64-bit field beyond 2^53');
	return Number(value);
}

const identityMatrix = [0x10000, 0, 0, 0, 0x10000, 0, 0, 0, 0x40000000];

function readMatrix(view: DataView, offset: number): number[] {
	return Array.from({ length: 9 }, (_, i) => view.getInt32(offset + 4 * i));
}

interface MovieHeader {
	timescale: number;
	duration: number;
	/** Seconds since 1904 as stored (0: not set). */
	creationTime: number;
}

function readMovieHeader(movie: Movie, box: Box): MovieHeader {
	const { view } = movie;
	whole(movie, box);
	const version = view.getUint8(box.start);
	const p = box.start;
	if (version > 1) decline('mvhd version');
	requireBytes(box, version === 1 ? 84 : 72);
	const creationTime = version === 1 ? safeUint64(view, p + 4) : view.getUint32(p + 4);
	const timescale = view.getUint32(p + (version === 1 ? 20 : 12));
	const duration = version === 1 ? safeUint64(view, p + 24) : view.getUint32(p + 16);
	const matrix = readMatrix(view, p + (version === 1 ? 48 : 36));
	if (matrix.some((value, i) => value !== identityMatrix[i])) decline('movie display matrix');
	if (timescale === 0) decline('movie timescale 0');
	if (duration === 0 || (version === 0 && duration === 0xffffffff)) decline('movie duration unknown');
	return { timescale, duration, creationTime };
}

interface Edit {
	/** Movie timescale. */
	duration: number;
	/** Media timescale; -1 for an empty edit. */
	mediaTime: number;
}

type SampleEntry =
	| { kind: 'video'; codec: string; width: number; height: number }
	| { kind: 'audio'; codec: string; sampleRate: number; channels: number };

interface Track {
	handler: 'vide' | 'soun';
	matrix: number[];
	mediaTimescale: number;
	mediaDuration: number;
	mediaCreationTime: number;
	sampleEntry: SampleEntry;
	/** Pairs of (sample count, sample delta). */
	timeToSample: { count: number; delta: number }[];
	/** Composition offset of the first sample; read only for a video track without an edit list. */
	firstCompositionOffset: number | null;
	sampleCount: number;
	edits: Edit[] | null;
}

function factsFromMovie(path: string, movie: Movie): MediaProbe {
	const boxes = childBoxes(movie, 0, movie.length);
	if (boxes.some((b) => b.type === 'mvex')) decline('fragmented movie (mvex)');
	if (boxes.some((b) => b.type === 'cmov')) decline('compressed movie header');
	const header = readMovieHeader(movie, only(boxes, 'mvhd', 'moov'));
	try {
		return factsWithHeader(path, movie, boxes, header);
	} catch (error) {
		if (error instanceof Declined) error.movieSeconds = header.duration / header.timescale;
		throw error;
	}
}

function factsWithHeader(path: string, movie: Movie, boxes: Box[], header: MovieHeader): MediaProbe {
	for (const box of boxes) if (box.type === 'udta' || box.type === 'meta') checkMetadata(movie, box);
	const tracks = boxes.filter((b) => b.type === 'trak').map((b) => readTrack(movie, b));
	if (!tracks.length) decline('no tracks');

	const timed = tracks.map((track) => ({ track, timing: trackTiming(track, header) }));
	const startMicroseconds = Math.min(...timed.map(({ track, timing }) => rescale(timing.startTicks, 1_000_000, track.mediaTimescale)));
	const firstVideo = timed.find((t) => t.track.handler === 'vide');
	const firstAudio = timed.find((t) => t.track.handler === 'soun');
	const video = firstVideo ? videoFacts(firstVideo.track, firstVideo.timing) : null;
	const audio = firstAudio ? audioFacts(firstAudio.track, firstAudio.timing) : null;
	const creationTime =
		creationTimeText(header.creationTime) ??
		(firstVideo ? creationTimeText(firstVideo.track.mediaCreationTime) : null) ??
		(firstAudio ? creationTimeText(firstAudio.track.mediaCreationTime) : null);
	return {
		path,
		formatName: movFormatName,
		durationSeconds: printedSeconds(rescale(header.duration, 1_000_000, header.timescale), 1_000_000),
		startSeconds: printedSeconds(startMicroseconds, 1_000_000),
		creationTime,
		// A timecode comes from a tmcd or rtmd track, which makes readTrack decline.
		timecode: null,
		video,
		audio
	};
}

function readTrack(movie: Movie, trak: Box): Track {
	const { view } = movie;
	const boxes = childBoxes(movie, trak.start, trak.end);
	for (const box of boxes) {
		if (box.type === 'udta' || box.type === 'meta') checkMetadata(movie, box);
		// A reference to a timecode or chapter track, or any other: ffmpeg may attach what it finds there.
		if (box.type === 'tref') decline('track reference');
	}
	const tkhd = whole(movie, only(boxes, 'tkhd', 'trak'));
	const tkhdVersion = view.getUint8(tkhd.start);
	if (tkhdVersion > 1) decline('tkhd version');
	requireBytes(tkhd, tkhdVersion === 1 ? 96 : 84);
	const matrix = readMatrix(view, tkhd.start + (tkhdVersion === 1 ? 52 : 40));

	const mdia = only(boxes, 'mdia', 'trak');
	const mediaBoxes = childBoxes(movie, mdia.start, mdia.end);
	const mdhd = whole(movie, only(mediaBoxes, 'mdhd', 'mdia'));
	const mdhdVersion = view.getUint8(mdhd.start);
	if (mdhdVersion > 1) decline('mdhd version');
	requireBytes(mdhd, mdhdVersion === 1 ? 36 : 24);
	const mediaCreationTime = mdhdVersion === 1 ? safeUint64(view, mdhd.start + 4) : view.getUint32(mdhd.start + 4);
	const mediaTimescale = view.getUint32(mdhd.start + (mdhdVersion === 1 ? 20 : 12));
	const mediaDuration = mdhdVersion === 1 ? safeUint64(view, mdhd.start + 24) : view.getUint32(mdhd.start + 16);
	if (mediaTimescale === 0 || mediaTimescale > 0x7fffffff) decline('media timescale');
	if (mediaDuration === 0 || (mdhdVersion === 0 && mediaDuration === 0xffffffff)) decline('media duration unknown');

	const hdlr = whole(movie, only(mediaBoxes, 'hdlr', 'mdia'));
	requireBytes(hdlr, 12);
	const handler = fourcc(view, hdlr.start + 8);
	if (handler !== 'vide' && handler !== 'soun') decline(`a ${printable(handler)} track`);

	const minf = only(mediaBoxes, 'minf', 'mdia');
	const mediaInfoBoxes = childBoxes(movie, minf.start, minf.end);
	checkDataReferences(movie, only(mediaInfoBoxes, 'dinf', 'minf'));
	const stbl = only(mediaInfoBoxes, 'stbl', 'minf');
	const tableBoxes = childBoxes(movie, stbl.start, stbl.end);

	const sampleEntry = readSampleEntry(movie, only(tableBoxes, 'stsd', 'stbl'), handler);
	const timeToSample = readTimeToSample(movie, only(tableBoxes, 'stts', 'stbl'));
	const sampleCount = readSampleCount(movie, tableBoxes);
	checkChunks(movie, tableBoxes);
	const sttsCount = timeToSample.reduce((sum, e) => sum + e.count, 0);
	if (sttsCount !== sampleCount) decline('stts and stsz count different samples');

	const edts = optional(boxes, 'edts', 'trak');
	const edits = edts ? readEdits(movie, edts) : null;
	const ctts = optional(tableBoxes, 'ctts', 'stbl');
	if (ctts && handler !== 'vide') decline('composition offsets on sound');
	// With an edit list the start is the empty edit's length whatever the offsets; reading a long
	// table only to discard it would cost more than the rest of the file.
	const firstCompositionOffset = ctts && !edits ? readFirstCompositionOffset(movie, ctts) : null;
	return {
		handler,
		matrix,
		mediaTimescale,
		mediaDuration,
		mediaCreationTime,
		sampleEntry,
		timeToSample,
		firstCompositionOffset,
		sampleCount,
		edits
	};
}

/** Media from another file (an alias or URL without the self-contained flag) is not in this one. */
function checkDataReferences(movie: Movie, dinf: Box): void {
	const { view } = movie;
	whole(movie, dinf);
	const dref = only(childBoxes(movie, dinf.start, dinf.end), 'dref', 'dinf');
	requireBytes(dref, 8);
	for (const entry of childBoxes(movie, dref.start + 8, dref.end)) {
		requireBytes(entry, 4);
		if (!(view.getUint32(entry.start) & 1)) decline('media in another file');
	}
}

/**
 * Metadata that would change the facts: cover art (ffmpeg adds a picture stream), iTunes gapless
 * info (it shifts an AAC stream's start) and QuickTime keys that ffprobe would list as
 * creation_time or timecode.
 */
function checkMetadata(movie: Movie, box: Box): void {
	whole(movie, box);
	const start = box.type === 'meta' ? metaChildrenStart(movie.view, box) : box.start;
	for (const child of childBoxes(movie, start, box.end)) {
		if (child.type === 'meta' || child.type === 'ilst') checkMetadata(movie, child);
		else if (child.type === 'covr') decline('cover art');
		else if (child.type === '----') decline('iTunes custom metadata');
		else if (child.type === 'keys') checkMetadataKeys(movie.view, child);
	}
}

/** ISO `meta` is a full box; QuickTime's is a plain one. ffmpeg looks for the `hdlr` either way. */
function metaChildrenStart(view: DataView, meta: Box): number {
	requireBytes(meta, 12);
	return fourcc(view, meta.start + 4) === 'hdlr' ? meta.start : meta.start + 4;
}

function checkMetadataKeys(view: DataView, keys: Box): void {
	requireBytes(keys, 8);
	const count = view.getUint32(keys.start + 4);
	let position = keys.start + 8;
	for (let i = 0; i < count; i++) {
		if (position + 8 > keys.end) decline('keys box cut short');
		const keyBytes = view.getUint32(position);
		if (keyBytes < 8 || position + keyBytes > keys.end) decline('keys box entry');
		const name = Buffer.from(view.buffer, view.byteOffset + position + 8, keyBytes - 8).toString('latin1').toLowerCase();
		if (name === 'creation_time' || name === 'timecode') decline(`metadata key ${name}`);
		position += keyBytes;
	}
}

function readTimeToSample(movie: Movie, stts: Box): { count: number; delta: number }[] {
	const { view } = movie;
	whole(movie, stts);
	requireBytes(stts, 8);
	const entryCount = view.getUint32(stts.start + 4);
	if (stts.end - stts.start < 8 + entryCount * 8) decline('stts box cut short');
	if (!entryCount) decline('no stts entries');
	const entries: { count: number; delta: number }[] = [];
	for (let i = 0; i < entryCount; i++) {
		const count = view.getUint32(stts.start + 8 + 8 * i);
		const delta = view.getUint32(stts.start + 12 + 8 * i);
		// ffmpeg rewrites deltas beyond 2^31 (negative ones written as unsigned) as corrections.
		if (delta > 0x7fffffff) decline('stts delta beyond 2^31');
		entries.push({ count, delta });
	}
	return entries;
}

function readFirstCompositionOffset(movie: Movie, ctts: Box): number | null {
	const { view } = movie;
	whole(movie, ctts);
	requireBytes(ctts, 8);
	const entryCount = view.getUint32(ctts.start + 4);
	if (ctts.end - ctts.start < 8 + entryCount * 8) decline('ctts box cut short');
	let first: number | null = null;
	for (let i = 0; i < entryCount; i++) {
		// ffmpeg reads both fields as signed 32-bit whatever the box version, and skips counts ≤ 0.
		const count = view.getInt32(ctts.start + 8 + 8 * i);
		const offset = view.getInt32(ctts.start + 12 + 8 * i);
		if (count <= 0) decline('ctts entry without samples');
		// ffmpeg drops the whole table when an offset is this far out.
		if (Math.abs(offset) >= 1 << 28) decline('ctts offset beyond 2^28');
		if (first === null) first = offset;
	}
	return first;
}

function readSampleCount(movie: Movie, tableBoxes: Box[]): number {
	const box = eitherBox(tableBoxes, 'stsz', 'stz2', 'sample sizes');
	requireBytes(box, 12);
	movie.require(box.start, box.start + 12);
	const count = movie.view.getUint32(box.start + 8);
	if (!count) decline('no samples');
	return count;
}

/**
 * The checks ffmpeg's mov_read_trak makes before building its index ("missing mandatory atoms",
 * "contradictionary STSC and STCO"), from the table headers and the last stsc entry: the full
 * tables take megabytes in a long clip and the facts do not depend on them.
 */
function checkChunks(movie: Movie, tableBoxes: Box[]): void {
	const { view } = movie;
	const offsets = eitherBox(tableBoxes, 'stco', 'co64', 'chunk offsets');
	requireBytes(offsets, 8);
	movie.require(offsets.start, offsets.start + 8);
	const chunkCount = view.getUint32(offsets.start + 4);
	const stsc = only(tableBoxes, 'stsc', 'stbl');
	requireBytes(stsc, 8);
	movie.require(stsc.start, stsc.start + 8);
	const entryCount = view.getUint32(stsc.start + 4);
	if (!chunkCount || !entryCount || stsc.end - stsc.start !== 8 + entryCount * 12) decline('stsc box');
	movie.require(stsc.end - 12, stsc.end);
	const lastFirstChunk = view.getUint32(stsc.end - 12);
	const lastDescriptionIndex = view.getUint32(stsc.end - 4);
	if (lastFirstChunk < 1 || lastFirstChunk > chunkCount || lastDescriptionIndex !== 1) decline('stsc entries');
}

function readEdits(movie: Movie, edts: Box): Edit[] {
	const { view } = movie;
	whole(movie, edts);
	const elst = only(childBoxes(movie, edts.start, edts.end), 'elst', 'edts');
	requireBytes(elst, 8);
	const version = view.getUint8(elst.start);
	if (version > 1) decline('elst version');
	const entryCount = view.getUint32(elst.start + 4);
	const entryBytes = version === 1 ? 20 : 12;
	if (elst.end - elst.start < 8 + entryCount * entryBytes) decline('elst box cut short');
	const edits: Edit[] = [];
	for (let i = 0; i < entryCount; i++) {
		const p = elst.start + 8 + i * entryBytes;
		const duration = version === 1 ? safeUint64(view, p) : view.getUint32(p);
		const mediaTime = version === 1 ? safeInt64(view, p + 8) : view.getInt32(p + 4);
		const rate = view.getInt32(p + (version === 1 ? 16 : 8));
		// ffmpeg ignores the rate; a file that uses it plays differently from what ffprobe says.
		if (rate !== 0x10000) decline('edit with a rate other than 1');
		if (duration === 0) decline('edit of zero duration');
		edits.push({ duration, mediaTime });
	}
	const shapeIsSimple =
		(edits.length === 1 && edits[0].mediaTime >= 0) ||
		(edits.length === 2 && edits[0].mediaTime === -1 && edits[1].mediaTime >= 0);
	if (!shapeIsSimple) decline('edit list other than one edit, optionally after one empty edit');
	return edits;
}

interface TrackTiming {
	/** Stream start_time, in media ticks. */
	startTicks: number;
	/** Stream duration, in media ticks. */
	durationTicks: number;
}

/**
 * Stream start_time and duration as ffmpeg's mov demuxer sets them (mov_build_index and
 * mov_fix_index, with its default advanced edit list handling): with an edit list the stream
 * starts at the empty edit's length, and lasts no longer than the edits together; without one a
 * video stream starts at its first composition offset and a sound stream at its first sample.
 */
function trackTiming(track: Track, header: MovieHeader): TrackTiming {
	const sttsTicks = track.timeToSample.reduce((sum, e) => sum + e.count * e.delta, 0);
	if (!Number.isSafeInteger(sttsTicks) || sttsTicks === 0) decline('stts duration');
	let durationTicks = Math.min(track.mediaDuration, sttsTicks);
	let startTicks = track.handler === 'vide' ? (track.firstCompositionOffset ?? 0) : 0;
	if (track.edits) {
		const editTicks = track.edits.map((e) => rescale(e.duration, track.mediaTimescale, header.timescale));
		durationTicks = Math.min(durationTicks, editTicks.reduce((a, b) => a + b, 0));
		startTicks = track.edits[0].mediaTime === -1 ? editTicks[0] : 0;
	}
	if (durationTicks <= 0) decline('stream duration 0');
	return { startTicks, durationTicks };
}

/** The largest numerator or denominator ffmpeg's av_reduce keeps exact. */
const intMax = 0x7fffffff;

function exactRational(num: number, den: number, what: string): Rational {
	if (!Number.isSafeInteger(num) || !Number.isSafeInteger(den)) decline(`${what} beyond 2^53`);
	const reduced = rational(num, den);
	if (reduced.num > intMax || reduced.den > intMax) decline(`${what} does not reduce below 2^31`);
	return reduced;
}

function videoFacts(track: Track, timing: TrackTiming): VideoStreamProbe {
	const entry = track.sampleEntry;
	if (entry.kind !== 'video') decline('video track without a video sample entry');
	const stts = track.timeToSample;
	// r_frame_rate: ffmpeg reads it from the stts only in these two shapes; otherwise it guesses from packet times.
	if (!(stts.length === 1 || (stts.length === 2 && stts[1].count === 1))) decline('variable frame timing');
	if (stts[0].delta === 0) decline('stts delta 0');
	const frameRate = exactRational(track.mediaTimescale, stts[0].delta, 'frame rate');
	const sttsTicks = stts.reduce((sum, e) => sum + e.count * e.delta, 0);
	const averageFrameRate = exactRational(track.mediaTimescale * track.sampleCount, sttsTicks, 'average frame rate');
	const durationSeconds = printedSeconds(timing.durationTicks, track.mediaTimescale);
	// probeMedia reads every packet time when these disagree; its answer then depends on those times.
	const rateDisagrees = Math.abs(rationalToNumber(frameRate) / rationalToNumber(averageFrameRate) - 1) > 1e-3;
	const countDisagrees = Math.abs(track.sampleCount - durationSeconds * rationalToNumber(frameRate)) > 1.5;
	if (rateDisagrees || countDisagrees) decline('frame rate, frame count and duration disagree');
	return {
		codec: entry.codec,
		width: entry.width,
		height: entry.height,
		rotationDegrees: rotationDegrees(track.matrix),
		frameRate,
		averageFrameRate,
		startSeconds: printedSeconds(timing.startTicks, track.mediaTimescale),
		durationSeconds,
		frameCount: track.sampleCount,
		variableFrameRate: false,
		frameTimesSeconds: null
	};
}

function audioFacts(track: Track, timing: TrackTiming): AudioStreamProbe {
	const entry = track.sampleEntry;
	if (entry.kind !== 'audio') decline('sound track without an audio sample entry');
	return {
		codec: entry.codec,
		sampleRate: entry.sampleRate,
		channels: entry.channels,
		startSeconds: printedSeconds(timing.startTicks, track.mediaTimescale),
		durationSeconds: printedSeconds(timing.durationTicks, track.mediaTimescale)
	};
}

/**
 * probeMedia's rotation: ffprobe prints av_display_rotation_get of the track matrix, truncated to
 * an integer, and probeMedia folds it into 0–359. Only the four plain rotations are taken.
 */
function rotationDegrees(matrix: number[]): number {
	const [a, b, u, c, d, v, , , w] = matrix;
	const unit = 0x10000;
	const plain =
		u === 0 &&
		v === 0 &&
		w === 0x40000000 &&
		((a === unit && d === unit && b === 0 && c === 0) ||
			(a === -unit && d === -unit && b === 0 && c === 0) ||
			(a === 0 && d === 0 && b === unit && c === -unit) ||
			(a === 0 && d === 0 && b === -unit && c === unit));
	if (!plain) decline('display matrix other than a plain rotation');
	const scaleX = Math.hypot(a / unit, c / unit);
	const scaleY = Math.hypot(b / unit, d / unit);
	const degrees = Math.trunc(-((Math.atan2(b / unit / scaleY, a / unit / scaleX) * 180) / Math.PI));
	return ((Math.round(degrees) % 360) + 360) % 360;
}

/** ffmpeg's av_rescale: value × multiplier ÷ divisor, rounded to nearest with halves away from zero. */
function rescale(value: number, multiplier: number, divisor: number): number {
	const product = BigInt(value) * BigInt(multiplier);
	const d = BigInt(divisor);
	const half = d / 2n;
	const quotient = product >= 0n ? (product + half) / d : -((-product + half) / d);
	if (quotient > BigInt(Number.MAX_SAFE_INTEGER) || quotient < BigInt(Number.MIN_SAFE_INTEGER)) decline('time beyond 2^53');
	return Number(quotient);
}

/**
 * ticks ÷ timescale as ffprobe prints it and probeMedia parses it back: the double
 * ticks × (1 / timescale) written with printf's "%f" (six decimals, exact ties to even).
 */
function printedSeconds(ticks: number, timescale: number): number {
	return Number(printfFixed6(ticks * (1 / timescale)));
}

function printfFixed6(value: number): string {
	if (!Number.isFinite(value)) decline('time not finite');
	const negative = value < 0;
	// The double's exact value is mantissa × 2^exponent; round mantissa × 10^6 × 2^exponent.
	const bits = new DataView(new ArrayBuffer(8));
	bits.setFloat64(0, Math.abs(value));
	const high = bits.getUint32(0);
	const biasedExponent = (high >>> 20) & 0x7ff;
	const fraction = (BigInt(high & 0xfffff) << 32n) | BigInt(bits.getUint32(4));
	const mantissa = biasedExponent ? fraction | (1n << 52n) : fraction;
	const exponent = (biasedExponent || 1) - 1075;
	let micro: bigint;
	if (exponent >= 0) {
		micro = (mantissa << BigInt(exponent)) * 1_000_000n;
	} else {
		const scaled = mantissa * 1_000_000n;
		const divisor = 1n << BigInt(-exponent);
		micro = scaled / divisor;
		const twiceRemainder = 2n * (scaled % divisor);
		if (twiceRemainder > divisor || (twiceRemainder === divisor && micro % 2n === 1n)) micro += 1n;
	}
	const digits = micro.toString().padStart(7, '0');
	const text = `${digits.slice(0, -6)}.${digits.slice(-6)}`;
	return negative && micro !== 0n ? `-${text}` : text;
}

/** Seconds between 1904-01-01, the QuickTime epoch, and 1970-01-01. */
const quickTimeEpochOffsetSeconds = 2082844800;

/**
 * ffmpeg's creation_time tag: QuickTime seconds (or, below the 1970 offset, Unix seconds as some
 * writers store them) printed as UTC with six zero decimals, e.g. 2024-05-01T10:20:30.000000Z.
 */
function creationTimeText(storedSeconds: number): string | null {
	if (!storedSeconds) return null;
	const unixSeconds = storedSeconds >= quickTimeEpochOffsetSeconds ? storedSeconds - quickTimeEpochOffsetSeconds : storedSeconds;
	const date = new Date(unixSeconds * 1000);
	if (Number.isNaN(date.getTime()) || date.getUTCFullYear() > 9999) decline('creation time out of range');
	return `${date.toISOString().slice(0, 19)}.000000Z`;
}

function readSampleEntry(movie: Movie, stsd: Box, handler: 'vide' | 'soun'): SampleEntry {
	const { view } = movie;
	whole(movie, stsd);
	requireBytes(stsd, 8);
	if (view.getUint8(stsd.start) !== 0) decline('stsd version');
	if (view.getUint32(stsd.start + 4) !== 1) decline('stsd with other than one sample entry');
	const entries = childBoxes(movie, stsd.start + 8, stsd.end);
	if (entries.length !== 1) decline('stsd with other than one sample entry');
	const entry = entries[0];
	return handler === 'vide' ? readVisualSampleEntry(movie, entry) : readAudioSampleEntry(movie, entry);
}

/** Bytes before a visual sample entry's child boxes (ISO/IEC 14496-12 VisualSampleEntry). */
const visualSampleEntryBytes = 78;
/** Bytes before a version-0 audio sample entry's child boxes (ISO/IEC 14496-12 AudioSampleEntry). */
const audioSampleEntryBytes = 28;

function readVisualSampleEntry(movie: Movie, entry: Box): SampleEntry {
	const { view } = movie;
	requireBytes(entry, visualSampleEntryBytes);
	const width = view.getUint16(entry.start + 24);
	const height = view.getUint16(entry.start + 26);
	const children = childBoxes(movie, entry.start + visualSampleEntryBytes, entry.end);
	let codec: string;
	let coded: { width: number; height: number };
	switch (entry.type) {
		case 'avc1':
		case 'avc3':
			codec = 'h264';
			coded = avcDimensions(view, only(children, 'avcC', entry.type));
			break;
		case 'hvc1':
		case 'hev1':
			codec = 'hevc';
			coded = hevcDimensions(view, only(children, 'hvcC', entry.type));
			break;
		default:
			decline(`video codec ${printable(entry.type)}`);
	}
	// ffprobe reports the decoder's size, which comes from the parameter set.
	if (coded.width !== width || coded.height !== height) decline('sample entry size differs from the parameter set');
	if (!width || !height) decline('video size 0');
	return { kind: 'video', codec, width, height };
}

function readAudioSampleEntry(movie: Movie, entry: Box): SampleEntry {
	const { view } = movie;
	requireBytes(entry, audioSampleEntryBytes);
	if (entry.type !== 'mp4a') decline(`audio codec ${printable(entry.type)}`);
	// QuickTime sound description version 1 adds four 32-bit fields (Apple QuickTime File Format,
	// "Sound Sample Description (Version 1)"); ffmpeg reads them whenever the stsd is version 0.
	const soundVersion = view.getUint16(entry.start + 8);
	if (soundVersion > 1) decline(`sound description version ${soundVersion}`);
	const childrenStart = entry.start + audioSampleEntryBytes + (soundVersion === 1 ? 16 : 0);
	if (childrenStart > entry.end) decline('sound description cut short');
	const children = childBoxes(movie, childrenStart, entry.end);
	const wave = optional(children, 'wave', entry.type);
	const esds = wave ? only(childBoxes(movie, wave.start, wave.end), 'esds', 'wave') : only(children, 'esds', entry.type);
	if (wave && children.some((b) => b.type === 'esds')) decline('esds both inside and outside wave');
	// The entry's own channel count and 16.16 rate are templates in MP4 (ffmpeg writes 2 channels for
	// mono) and cannot hold rates above 65535; ffprobe reports what the AAC configuration says.
	const config = aacConfig(view, esds);
	return { kind: 'audio', codec: 'aac', sampleRate: config.sampleRate, channels: config.channels };
}

/** MPEG-4 audio sampling frequencies by index (ISO/IEC 14496-3, Table 1.18). */
const aacSampleRates = [96000, 88200, 64000, 48000, 44100, 32000, 24000, 22050, 16000, 12000, 11025, 8000, 7350];
/** Channels by channel configuration (ISO/IEC 14496-3, Table 1.19); 0 means a program config element follows. */
const aacChannelCounts = [0, 1, 2, 3, 4, 5, 6, 8];
/** Lowest core rate where an undeclared (implicit) SBR layer is not expected: ffmpeg's decoder would double the rate. */
const lowestRateWithoutImplicitSbr = 32000;

/**
 * Sample rate and channels of plain AAC-LC, as ffmpeg's decoder reports them. Declines anything
 * where the decoder could report otherwise: SBR or PS (HE-AAC, declared or implicit at low core
 * rates), a program config element, other object types.
 */
function aacConfig(view: DataView, esds: Box): { sampleRate: number; channels: number } {
	const descriptors = new DescriptorReader(view, esds.start + 4, esds.end);
	const es = descriptors.expect(0x03);
	descriptors.skip(2);
	const esFlags = descriptors.byte();
	if (esFlags & 0x80) descriptors.skip(2);
	if (esFlags & 0x40) descriptors.skip(descriptors.byte());
	if (esFlags & 0x20) descriptors.skip(2);
	descriptors.within(es);
	const decoderConfig = descriptors.expect(0x04);
	// 0x40: MPEG-4 audio (ISO/IEC 14496-1 objectTypeIndication); other values are MP3, MPEG-2 AAC, ...
	if (descriptors.byte() !== 0x40) decline('mp4a object type other than MPEG-4 audio');
	descriptors.skip(12);
	descriptors.within(decoderConfig);
	const specificInfo = descriptors.expect(0x05);
	const config = new BitReader(view, specificInfo.start, specificInfo.end);

	// AudioSpecificConfig, ISO/IEC 14496-3 1.6.2.1.
	const objectType = config.bits(5);
	if (objectType !== 2) decline(`AAC object type ${objectType} (not LC)`);
	const rateIndex = config.bits(4);
	const sampleRate = rateIndex === 15 ? config.bits(24) : aacSampleRates[rateIndex];
	if (!sampleRate) decline('AAC sampling frequency index');
	const channelConfiguration = config.bits(4);
	const channels = aacChannelCounts[channelConfiguration];
	if (!channels) decline(`AAC channel configuration ${channelConfiguration}`);
	// GASpecificConfig: frameLengthFlag, dependsOnCoreCoder, extensionFlag.
	config.bits(1);
	if (config.bits(1)) decline('AAC core coder');
	if (config.bits(1)) decline('AAC extension flag');
	let sbrDeclaredAbsent = false;
	if (config.bitsLeft() >= 16) {
		// A backward-compatible extension (sync word 0x2b7) may declare SBR present or absent.
		if (config.bits(11) !== 0x2b7) decline('AAC configuration with extra data');
		if (config.bits(5) !== 5) decline('AAC extension other than SBR');
		if (config.bits(1)) decline('AAC with SBR (HE-AAC)');
		sbrDeclaredAbsent = true;
	}
	if (config.bitsLeft() >= 8) decline('AAC configuration with extra data');
	if (!sbrDeclaredAbsent && sampleRate < lowestRateWithoutImplicitSbr) decline('AAC at a low rate may carry implicit SBR');
	return { sampleRate, channels };
}

/** MPEG-4 descriptors (ISO/IEC 14496-1 8.3.3): a tag byte, then a size in up to four 7-bit groups. */
class DescriptorReader {
	constructor(
		private readonly view: DataView,
		private position: number,
		private end: number
	) {}

	byte(): number {
		if (this.position >= this.end) decline('esds cut short');
		return this.view.getUint8(this.position++);
	}

	skip(bytes: number): void {
		if (this.position + bytes > this.end) decline('esds cut short');
		this.position += bytes;
	}

	/** Reads a descriptor header with `tag`; the rest is read inside it. */
	expect(tag: number): { start: number; end: number } {
		if (this.byte() !== tag) decline(`esds without descriptor ${tag}`);
		let size = 0;
		for (let i = 0; i < 4; i++) {
			const b = this.byte();
			size = size * 128 + (b & 0x7f);
			if (!(b & 0x80)) break;
			if (i === 3) decline('esds descriptor size');
		}
		if (this.position + size > this.end) decline('esds descriptor runs past its parent');
		const inside = { start: this.position, end: this.position + size };
		this.end = inside.end;
		return inside;
	}

	/** Stays inside `parent` (what was read so far lies in it). */
	within(parent: { start: number; end: number }): void {
		this.end = parent.end;
	}
}

/** Reads bits most significant first; for parameter sets, the emulation prevention bytes are removed first. */
class BitReader {
	private bitPosition = 0;
	private readonly bytes: Uint8Array;

	constructor(view: DataView, start: number, end: number, withoutEmulationPrevention = false) {
		const raw = new Uint8Array(view.buffer, view.byteOffset + start, end - start);
		this.bytes = withoutEmulationPrevention ? removeEmulationPrevention(raw) : raw;
	}

	bitsLeft(): number {
		return this.bytes.length * 8 - this.bitPosition;
	}

	bits(count: number): number {
		if (count > this.bitsLeft()) decline('parameter set cut short');
		let value = 0;
		for (let i = 0; i < count; i++) {
			const byte = this.bytes[this.bitPosition >> 3];
			value = value * 2 + ((byte >> (7 - (this.bitPosition & 7))) & 1);
			this.bitPosition++;
		}
		return value;
	}

	skip(count: number): void {
		if (count > this.bitsLeft()) decline('parameter set cut short');
		this.bitPosition += count;
	}

	/** Exp-Golomb ue(v), ITU-T H.264 9.1. */
	unsigned(): number {
		let leadingZeros = 0;
		while (this.bits(1) === 0) {
			if (++leadingZeros > 31) decline('Exp-Golomb code too long');
		}
		return 2 ** leadingZeros - 1 + this.bits(leadingZeros);
	}

	signed(): number {
		const code = this.unsigned();
		return code % 2 ? (code + 1) / 2 : -code / 2;
	}
}

function removeEmulationPrevention(raw: Uint8Array): Uint8Array {
	const out = new Uint8Array(raw.length);
	let length = 0;
	let zeros = 0;
	for (const byte of raw) {
		if (zeros >= 2 && byte === 3) {
			zeros = 0;
			continue;
		}
		zeros = byte === 0 ? zeros + 1 : 0;
		out[length++] = byte;
	}
	return out.subarray(0, length);
}

/** H.264 profiles whose SPS carries chroma format and bit depths (ITU-T H.264 7.3.2.1.1). */
const avcHighProfiles = new Set([100, 110, 122, 244, 44, 83, 86, 118, 128, 138, 139, 134, 135]);

/** Picture size after cropping, from the first SPS of an avcC box (ITU-T H.264 7.3.2.1.1, 7.4.2.1.1). */
function avcDimensions(view: DataView, avcC: Box): { width: number; height: number } {
	requireBytes(avcC, 7);
	const spsCount = view.getUint8(avcC.start + 5) & 0x1f;
	if (spsCount < 1) decline('avcC without SPS');
	const spsBytes = view.getUint16(avcC.start + 6);
	if (avcC.start + 8 + spsBytes > avcC.end || spsBytes < 4) decline('avcC SPS cut short');
	const sps = new BitReader(view, avcC.start + 8, avcC.start + 8 + spsBytes, true);
	if ((sps.bits(8) & 0x1f) !== 7) decline('avcC SPS is not an SPS');
	const profile = sps.bits(8);
	sps.skip(16);
	sps.unsigned();
	let chromaFormat = 1;
	if (avcHighProfiles.has(profile)) {
		chromaFormat = sps.unsigned();
		if (chromaFormat > 3) decline('H.264 chroma format');
		if (chromaFormat === 3) sps.skip(1);
		sps.unsigned();
		sps.unsigned();
		sps.skip(1);
		if (sps.bits(1)) {
			for (let i = 0; i < (chromaFormat === 3 ? 12 : 8); i++) {
				if (!sps.bits(1)) continue;
				let last = 8;
				let next = 8;
				for (let j = 0; j < (i < 6 ? 16 : 64) && next !== 0; j++) {
					next = (last + sps.signed() + 256) % 256;
					last = next === 0 ? last : next;
				}
			}
		}
	}
	sps.unsigned();
	const pictureOrderType = sps.unsigned();
	if (pictureOrderType === 0) {
		sps.unsigned();
	} else if (pictureOrderType === 1) {
		sps.skip(1);
		sps.signed();
		sps.signed();
		const cycle = sps.unsigned();
		if (cycle > 255) decline('H.264 POC cycle');
		for (let i = 0; i < cycle; i++) sps.signed();
	} else if (pictureOrderType !== 2) {
		decline('H.264 POC type');
	}
	sps.unsigned();
	sps.skip(1);
	const widthInMacroblocks = sps.unsigned() + 1;
	const heightInMapUnits = sps.unsigned() + 1;
	const frameMacroblocksOnly = sps.bits(1);
	if (!frameMacroblocksOnly) sps.skip(1);
	sps.skip(1);
	let width = widthInMacroblocks * 16;
	let height = heightInMapUnits * 16 * (2 - frameMacroblocksOnly);
	if (sps.bits(1)) {
		const [left, right, top, bottom] = [sps.unsigned(), sps.unsigned(), sps.unsigned(), sps.unsigned()];
		// ffmpeg trims a left or top crop to keep alignment; those are rare enough to leave to it.
		if (left || top) decline('H.264 crop on the left or top');
		const cropUnitX = chromaFormat === 1 || chromaFormat === 2 ? 2 : 1;
		const cropUnitY = (chromaFormat === 1 ? 2 : 1) * (2 - frameMacroblocksOnly);
		width -= right * cropUnitX;
		height -= bottom * cropUnitY;
	}
	if (width <= 0 || height <= 0) decline('H.264 crop larger than the picture');
	return { width, height };
}

/** Picture size after the conformance window, from the first SPS of an hvcC box (ITU-T H.265 7.3.2.2). */
function hevcDimensions(view: DataView, hvcC: Box): { width: number; height: number } {
	requireBytes(hvcC, 23);
	const arrayCount = view.getUint8(hvcC.start + 22);
	let position = hvcC.start + 23;
	let spsRange: { start: number; end: number } | null = null;
	for (let i = 0; i < arrayCount && !spsRange; i++) {
		if (position + 3 > hvcC.end) decline('hvcC cut short');
		const nalType = view.getUint8(position) & 0x3f;
		const nalCount = view.getUint16(position + 1);
		position += 3;
		for (let j = 0; j < nalCount; j++) {
			if (position + 2 > hvcC.end) decline('hvcC cut short');
			const nalBytes = view.getUint16(position);
			if (position + 2 + nalBytes > hvcC.end) decline('hvcC cut short');
			// NAL unit type 33: sequence parameter set.
			if (nalType === 33 && !spsRange) spsRange = { start: position + 2, end: position + 2 + nalBytes };
			position += 2 + nalBytes;
		}
	}
	if (!spsRange) decline('hvcC without SPS');
	const sps = new BitReader(view, spsRange.start, spsRange.end, true);
	if (((sps.bits(16) >> 9) & 0x3f) !== 33) decline('hvcC SPS is not an SPS');
	sps.skip(4);
	const maxSubLayersMinus1 = sps.bits(3);
	sps.skip(1);
	// profile_tier_level: general profile (88 bits) and level (8 bits), then per sub-layer flags and fields.
	sps.skip(96);
	const subLayerProfile: number[] = [];
	const subLayerLevel: number[] = [];
	for (let i = 0; i < maxSubLayersMinus1; i++) {
		subLayerProfile.push(sps.bits(1));
		subLayerLevel.push(sps.bits(1));
	}
	if (maxSubLayersMinus1 > 0) sps.skip(2 * (8 - maxSubLayersMinus1));
	for (let i = 0; i < maxSubLayersMinus1; i++) {
		if (subLayerProfile[i]) sps.skip(88);
		if (subLayerLevel[i]) sps.skip(8);
	}
	sps.unsigned();
	let chromaFormat = sps.unsigned();
	if (chromaFormat > 3) decline('HEVC chroma format');
	if (chromaFormat === 3 && sps.bits(1)) chromaFormat = 0;
	let width = sps.unsigned();
	let height = sps.unsigned();
	if (sps.bits(1)) {
		const [left, right, top, bottom] = [sps.unsigned(), sps.unsigned(), sps.unsigned(), sps.unsigned()];
		if (left || top) decline('HEVC conformance window on the left or top');
		const subWidth = chromaFormat === 1 || chromaFormat === 2 ? 2 : 1;
		const subHeight = chromaFormat === 1 ? 2 : 1;
		width -= (left + right) * subWidth;
		height -= (top + bottom) * subHeight;
	}
	if (width <= 0 || height <= 0) decline('HEVC conformance window larger than the picture');
	return { width, height };
}
