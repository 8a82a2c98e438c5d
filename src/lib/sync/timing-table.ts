import { clipTimeOf, frameAt, frameCountOf, frameTimeSeconds, nearestFrame, sessionTimeOf, type ClipPlacement, type FrameTiming } from './frames';
import { rationalToNumber, type Rational } from './rational';
import { framesOfTimecode, isDropFrameRate, timecodeOfFrame } from './timecode';

/*
 * The timing table: for chosen instants of a capture session's usable span, which frame of
 * each camera shows it (DESIGN.md's one formula, through frames.ts). Pure: the server gathers
 * the clips, the exporters write what this returns, the page previews it.
 */

export type InstantChoice =
	| { kind: 'every'; everySeconds: number }
	| { kind: 'count'; count: number }
	| { kind: 'frames'; clipId: string };

export type CameraPositionName = 'high' | 'mid' | 'low' | 'other';

export interface TableClipInput {
	id: string;
	label: string;
	position: CameraPositionName;
	fileName: string;
	isReference: boolean;
	placement: ClipPlacement;
	/** Exact rate; for variable frame timing the nominal one (labels and tolerance use it). */
	frameRate: Rational;
	variableFrameRate: boolean;
	frames: FrameTiming;
	/** Start time code written by the camera, e.g. "10:00:00;00"; frame 0 carries it. */
	embeddedTimecode: string | null;
}

export interface TableSession {
	id: string;
	name: string;
	site: string;
	captureDate: string | null;
	status: 'draft' | 'aligned' | 'in_review' | 'approved';
	revision: number;
}

export interface TimingTableInput {
	session: TableSession;
	/** Session time, seconds. */
	usableSpan: { startSeconds: number; endSeconds: number };
	/** The cameras of the table, in column order. */
	clips: TableClipInput[];
	instants: InstantChoice;
	/** Rows whose worst residual exceeds this are flagged; default half a frame of the slowest camera. */
	toleranceMs?: number;
}

export interface FrameRef {
	index: number;
	/** Presentation time in clip time, seconds. */
	timeSeconds: number;
	timecode: string;
}

export interface ClipTiming {
	id: string;
	/** Column key in CSV headers: the camera label in lower case with underscores, unique in the table. */
	key: string;
	label: string;
	position: CameraPositionName;
	fileName: string;
	isReference: boolean;
	offsetSeconds: number;
	driftPpm: number;
	frameRate: { num: number; den: number; fps: number };
	variableFrameRate: boolean;
	frameCount: number;
	dropFrame: boolean;
	/** Time code of frame 0: the camera's own when it wrote one, else 00:00:00:00. */
	startTimecode: string;
	embeddedTimecode: boolean;
	/** The usable span in this clip's own time, seconds. */
	usableSpan: { startSeconds: number; endSeconds: number };
	/** The frames showing the first and last instant of the usable span (null where the clip has none). */
	firstFrame: FrameRef | null;
	lastFrame: FrameRef | null;
}

export interface TableCell extends FrameRef {
	/** (frame's session time − instant) in milliseconds. */
	residualMs: number;
}

export interface TableRow {
	/** 0-based position of the instant. */
	index: number;
	sessionSeconds: number;
	/** One per camera, in the order of `clips`; null where that camera has no frame at the instant. */
	cells: (TableCell | null)[];
	/** Largest |residual| of the row, null when a camera has no frame. */
	worstResidualMs: number | null;
	/** Worst residual above the tolerance, or a camera without a frame. */
	flagged: boolean;
}

export interface TimingTable {
	session: TableSession;
	approved: boolean;
	usableSpan: { startSeconds: number; endSeconds: number };
	instants: InstantChoice;
	toleranceMs: number;
	toleranceRule: 'half a frame of the slowest camera' | 'given';
	clips: ClipTiming[];
	rows: TableRow[];
	summary: { rowCount: number; flaggedCount: number; worstResidualMs: number | null; meanAbsResidualMs: number | null };
}

/** The most rows one table holds: a minute at 60 fps is 3600 rows, an hour 216 000. */
export const MAX_TABLE_ROWS = 250_000;

export class TimingTableError extends Error {
	constructor(
		readonly code: 'empty_span' | 'no_cameras' | 'too_many_rows' | 'bad_instants' | 'unknown_camera',
		message: string
	) {
		super(message);
		this.name = 'TimingTableError';
	}
}

/** Seconds to the microsecond and milliseconds to the microsecond: what every format writes. */
export const roundSeconds = (value: number) => clean(Math.round(value * 1e6) / 1e6);
export const roundMs = (value: number) => clean(Math.round(value * 1e3) / 1e3);
const clean = (value: number) => (Object.is(value, -0) ? 0 : value);

export function columnKeys(labels: string[]): string[] {
	const used = new Set<string>();
	return labels.map((label) => {
		const base =
			label
				.normalize('NFKD')
				.replace(/[\u0300-\u036f]/g, '')
				.toLowerCase()
				.replace(/[^a-z0-9]+/g, '_')
				.replace(/^_+|_+$/g, '') || 'camera';
		let key = base;
		for (let n = 2; used.has(key); n++) key = `${base}_${n}`;
		used.add(key);
		return key;
	});
}

/** Frame `index`'s time code: counted frames for constant timing, the nominal-rate slot of its timestamp for variable timing. */
function frameLabel(clip: TableClipInput, index: number, timeSeconds: number, startFrames: number): string {
	const count = clip.frames.kind === 'constant' ? index : Math.round((timeSeconds * clip.frameRate.num) / clip.frameRate.den);
	return timecodeOfFrame(count, clip.frameRate, { startFrames });
}

function startFramesOf(clip: TableClipInput): number | null {
	return clip.embeddedTimecode ? framesOfTimecode(clip.embeddedTimecode, clip.frameRate) : null;
}

/** Session instants of the table, in order. */
export function instantsOf(input: Pick<TimingTableInput, 'usableSpan' | 'clips' | 'instants'>): number[] {
	const { startSeconds: start, endSeconds: end } = input.usableSpan;
	const choice = input.instants;
	const instants: number[] = [];
	const guard = (n: number) => {
		if (n > MAX_TABLE_ROWS) {
			throw new TimingTableError('too_many_rows', `That makes ${n} rows, more than the ${MAX_TABLE_ROWS} a table holds: choose a longer interval or fewer instants.`);
		}
	};
	if (choice.kind === 'every') {
		if (!(choice.everySeconds >= 0.001)) throw new TimingTableError('bad_instants', 'The interval must be at least 0.001 s.');
		// Each instant is start + k·S (never a running sum), the same instants as `align --every`.
		guard(Math.floor((end - start) / choice.everySeconds) + 1);
		for (let k = 0; ; k++) {
			const t = start + k * choice.everySeconds;
			if (t > end + 1e-9) break;
			instants.push(t);
		}
	} else if (choice.kind === 'count') {
		if (!Number.isInteger(choice.count) || choice.count < 1) throw new TimingTableError('bad_instants', 'The number of instants must be a whole number of at least 1.');
		guard(choice.count);
		if (choice.count === 1) instants.push((start + end) / 2);
		else for (let k = 0; k < choice.count; k++) instants.push(start + (k * (end - start)) / (choice.count - 1));
	} else {
		const clip = input.clips.find((c) => c.id === choice.clipId);
		if (!clip) throw new TimingTableError('unknown_camera', 'Choose one of the exported cameras for "every frame of".');
		const count = frameCountOf(clip.frames);
		const sessionOf = (i: number) => sessionTimeOf(frameTimeSeconds(i, clip.frames), clip.placement);
		let first = nearestFrame(clipTimeOf(start, clip.placement), clip.frames) ?? 0;
		while (first > 0 && sessionOf(first - 1) >= start - 1e-9) first--;
		while (first < count && sessionOf(first) < start - 1e-9) first++;
		let last = nearestFrame(clipTimeOf(end, clip.placement), clip.frames) ?? count - 1;
		while (last + 1 < count && sessionOf(last + 1) <= end + 1e-9) last++;
		while (last >= 0 && sessionOf(last) > end + 1e-9) last--;
		guard(last - first + 1);
		for (let i = first; i <= last; i++) instants.push(sessionOf(i));
	}
	return instants;
}

export function defaultToleranceMs(clips: Pick<TableClipInput, 'frameRate'>[]): number {
	const slowest = Math.max(...clips.map((c) => c.frameRate.den / c.frameRate.num));
	return roundMs((slowest / 2) * 1000);
}

export function buildTimingTable(input: TimingTableInput): TimingTable {
	const { startSeconds: start, endSeconds: end } = input.usableSpan;
	if (!(end > start)) throw new TimingTableError('empty_span', 'The usable span is empty: mark it on the workbench first.');
	if (input.clips.length === 0) throw new TimingTableError('no_cameras', 'Choose at least one aligned camera.');
	const keys = columnKeys(input.clips.map((c) => c.label));
	const starts = input.clips.map((c) => startFramesOf(c) ?? 0);

	const refOf = (clip: TableClipInput, c: number, index: number | null): FrameRef | null => {
		if (index === null) return null;
		const timeSeconds = frameTimeSeconds(index, clip.frames);
		return { index, timeSeconds: roundSeconds(timeSeconds), timecode: frameLabel(clip, index, timeSeconds, starts[c]) };
	};

	const clips: ClipTiming[] = input.clips.map((clip, c) => ({
		id: clip.id,
		key: keys[c],
		label: clip.label,
		position: clip.position,
		fileName: clip.fileName,
		isReference: clip.isReference,
		offsetSeconds: clip.placement.offsetSeconds,
		driftPpm: clip.placement.driftPpm,
		frameRate: { num: clip.frameRate.num, den: clip.frameRate.den, fps: rationalToNumber(clip.frameRate) },
		variableFrameRate: clip.variableFrameRate,
		frameCount: frameCountOf(clip.frames),
		dropFrame: isDropFrameRate(clip.frameRate),
		startTimecode: timecodeOfFrame(0, clip.frameRate, { startFrames: starts[c] }),
		embeddedTimecode: startFramesOf(clip) !== null,
		usableSpan: { startSeconds: roundSeconds(clipTimeOf(start, clip.placement)), endSeconds: roundSeconds(clipTimeOf(end, clip.placement)) },
		firstFrame: refOf(clip, c, frameAt(start, clip)),
		lastFrame: refOf(clip, c, frameAt(end, clip))
	}));

	const toleranceMs = input.toleranceMs ?? defaultToleranceMs(input.clips);
	let flaggedCount = 0;
	let worstOverall: number | null = null;
	let sumAbs = 0;
	let residualCount = 0;
	const rows: TableRow[] = instantsOf(input).map((instant, index) => {
		let worst: number | null = 0;
		const cells = input.clips.map((clip, c): TableCell | null => {
			const frame = frameAt(instant, clip);
			if (frame === null) {
				worst = null;
				return null;
			}
			const timeSeconds = frameTimeSeconds(frame, clip.frames);
			const residualMs = roundMs((sessionTimeOf(timeSeconds, clip.placement) - instant) * 1000);
			if (worst !== null) worst = Math.max(worst, Math.abs(residualMs));
			sumAbs += Math.abs(residualMs);
			residualCount++;
			return { index: frame, timeSeconds: roundSeconds(timeSeconds), timecode: frameLabel(clip, frame, timeSeconds, starts[c]), residualMs };
		});
		const flagged = worst === null || worst > toleranceMs;
		if (flagged) flaggedCount++;
		if (worst !== null) worstOverall = Math.max(worstOverall ?? 0, worst);
		return { index, sessionSeconds: roundSeconds(instant), cells, worstResidualMs: worst, flagged };
	});

	return {
		session: input.session,
		approved: input.session.status === 'approved',
		usableSpan: { startSeconds: roundSeconds(start), endSeconds: roundSeconds(end) },
		instants: input.instants,
		toleranceMs,
		toleranceRule: input.toleranceMs === undefined ? 'half a frame of the slowest camera' : 'given',
		clips,
		rows,
		summary: {
			rowCount: rows.length,
			flaggedCount,
			worstResidualMs: worstOverall,
			meanAbsResidualMs: residualCount ? roundMs(sumAbs / residualCount) : null
		}
	};
}

/** A stored clip's fields the table needs (the shape of a `clips` row, without importing the schema). */
export interface StoredClipTiming {
	frameRateNum: number | null;
	frameRateDen: number | null;
	variableFrameRate: boolean;
	videoStartSeconds: number | null;
	durationSeconds: number | null;
	probeJson: string | null;
}

/**
 * A stored clip's frame timing, the same as `frameTimingOf(probe)` gives the engine and the
 * `align` command: real timestamps for variable timing, else rate, first frame and count.
 */
export function frameTimingOfStored(clip: StoredClipTiming, frameTimesSeconds: number[] | null): { frames: FrameTiming; frameRate: Rational } | null {
	const probe = clip.probeJson ? (JSON.parse(clip.probeJson) as { frameCount?: number | null; videoDurationSeconds?: number | null; averageFrameRate?: Rational | null }) : {};
	const stored = clip.frameRateNum && clip.frameRateDen ? { num: clip.frameRateNum, den: clip.frameRateDen } : null;
	const frameRate = stored ?? probe.averageFrameRate ?? null;
	if (clip.variableFrameRate && frameTimesSeconds && frameTimesSeconds.length > 0) {
		const nominal = frameRate ?? { num: Math.round((frameTimesSeconds.length - 1) * 1000), den: Math.max(1, Math.round((frameTimesSeconds.at(-1)! - frameTimesSeconds[0]) * 1000)) };
		return { frames: { kind: 'variable', frameTimesSeconds }, frameRate: nominal };
	}
	if (!frameRate) return null;
	const duration = probe.videoDurationSeconds ?? clip.durationSeconds ?? 0;
	const frameCount = probe.frameCount ?? Math.round((duration * frameRate.num) / frameRate.den);
	return { frames: { kind: 'constant', frameRate, firstFrameSeconds: clip.videoStartSeconds ?? 0, frameCount }, frameRate };
}
