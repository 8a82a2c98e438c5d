import { mkdtempSync, rmSync } from 'node:fs';
import { availableParallelism, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import type { Piscina } from 'piscina';
import { sessionTimeOf, frameAt, frameSpanSeconds, type FrameTiming } from '../../sync/frames';
import { OnsetEnvelopeBuilder } from '../../sync/onset-envelope';
import { defaultPairOptions, envelopeOptions, levelDbOf, type PairEstimate, type PairOptions } from '../../sync/pair';
import { solveSession, type SessionSolution } from '../../sync/solve';
import type { Rational } from '../../sync/rational';
import { runAlignTask, type AlignTask, type AlignTaskResult, type PreparedSound } from './align-worker';
import { audioStartSeconds, decodedFullScale, decodeSounds, releaseSound, type DecodedPcm, type DecodedSound } from './decode';
import { MediaReadError, probeMedia, type MediaProbe } from './probe';
import { inspectMp4 } from './mp4-facts';

export interface AlignOptions {
	/** Index (in the given order) of the reference clip; default: the clip sharing sound with the most others. */
	referenceIndex?: number;
	/** Rate the audio is decoded at once; every analysis rate is derived from it. */
	analysisSampleRate?: number;
	/** The machine's cores, by default: worker threads (when used) and half the ffmpeg runs at once. */
	concurrency?: number;
	/**
	 * Where the transforms run: 'pool' in worker threads, 'inline' on this thread. 'auto' uses the
	 * pool only with four cores or more, four clips or more and over 5 minutes of media: on two
	 * cores the decodes already keep both busy, and threads cost start-up and compiling each
	 * (three 60-minute clips took 0.5–1 CPU-s more with them and finished no sooner).
	 */
	workers?: 'auto' | 'pool' | 'inline';
	pairOptions?: Partial<PairOptions>;
	onProgress?: (progress: AlignProgress) => void;
	signal?: AbortSignal;
}

export interface AlignProgress {
	stage: 'probe' | 'decode' | 'pairs' | 'solve';
	done: number;
	total: number;
}

export interface AlignedClip {
	path: string;
	probe: MediaProbe;
	matched: boolean;
	offsetSeconds: number | null;
	driftPpm: number | null;
	driftMeasured: boolean;
	confidence: number;
	frameRate: Rational | null;
	variableFrameRate: boolean;
	durationSeconds: number;
	/** Clip-time span holding media: [start, end) on the clip's own timeline. */
	mediaSpan: { start: number; end: number };
	frames: FrameTiming | null;
	notes: string[];
}

export interface PairResult {
	a: number;
	b: number;
	estimate: PairEstimate;
}

export interface AlignReport {
	referenceIndex: number;
	clips: AlignedClip[];
	pairs: PairResult[];
	solution: SessionSolution;
	/** Session-time span where every matched clip has media, or null when they never all overlap. */
	commonSpan: { start: number; end: number } | null;
}

/** Every input that could not be read, one reason each. */
export class MediaReadErrors extends Error {
	constructor(readonly errors: MediaReadError[]) {
		super(errors.map((e) => e.message).join('\n'));
		this.name = 'MediaReadErrors';
	}
}

export function frameTimingOf(probe: MediaProbe): FrameTiming | null {
	const video = probe.video;
	if (!video) return null;
	if (video.variableFrameRate && video.frameTimesSeconds) return { kind: 'variable', frameTimesSeconds: video.frameTimesSeconds };
	const frameRate = video.frameRate ?? video.averageFrameRate;
	if (!frameRate) return null;
	const duration = video.durationSeconds ?? probe.durationSeconds;
	const frameCount = video.frameCount ?? Math.round((duration * frameRate.num) / frameRate.den);
	return { kind: 'constant', frameRate, firstFrameSeconds: video.startSeconds, frameCount };
}

async function mapLimited<T, R>(items: T[], limit: number, work: (item: T, index: number) => Promise<R>): Promise<PromiseSettledResult<R>[]> {
	const results: PromiseSettledResult<R>[] = new Array(items.length);
	let next = 0;
	async function lane() {
		while (next < items.length) {
			const index = next++;
			try {
				results[index] = { status: 'fulfilled', value: await work(items[index], index) };
			} catch (reason) {
				results[index] = { status: 'rejected', reason };
			}
		}
	}
	await Promise.all(Array.from({ length: Math.min(limit, items.length) }, lane));
	return results;
}

/**
 * The worker module. Built code has a .js sibling. From TypeScript source (tsx, vitest) the worker
 * is bundled once into plain JavaScript, so each thread starts in milliseconds instead of loading a
 * TypeScript loader and compiling the sync modules again; without esbuild the .ts file is used.
 */
async function workerFile(): Promise<{ url: string; plainJavaScript: boolean; cleanup: () => void }> {
	const keep = { plainJavaScript: true, cleanup: () => {} };
	// Built from a variable so bundlers do not mistake it for an asset import.
	const worker = './align-worker';
	if (!import.meta.url.endsWith('.ts')) return { url: new URL(worker + '.js', import.meta.url).href, ...keep };
	const source = new URL(worker + '.ts', import.meta.url);
	try {
		const { build } = await import('esbuild');
		const dir = mkdtempSync(join(tmpdir(), 'lockstep-align-'));
		const outfile = join(dir, 'align-worker.mjs');
		await build({ entryPoints: [fileURLToPath(source)], bundle: true, format: 'esm', platform: 'node', target: 'node20', outfile, logLevel: 'silent' });
		return { url: pathToFileURL(outfile).href, plainJavaScript: true, cleanup: () => rmSync(dir, { recursive: true, force: true }) };
	} catch {
		return { url: source.href, plainJavaScript: false, cleanup: () => {} };
	}
}

/**
 * Which clips share an ffmpeg run. Its start-up (about 0.12 CPU-s here, loading two hundred
 * libraries) costs more than decoding a minute and a half of sound, so short clips are packed
 * together; a run decodes on one core, so a long clip gets a run of its own and long clips
 * decode side by side. A clip of unknown length decodes alone. Longest work first.
 */
export function decodeGroups(durations: (number | null)[], sharedSeconds = 300): number[][] {
	const order = durations.map((duration, index) => ({ duration, index })).sort((x, y) => (y.duration ?? Infinity) - (x.duration ?? Infinity));
	const groups: { indices: number[]; seconds: number; short: boolean }[] = [];
	for (const { duration, index } of order) {
		const short = duration !== null && duration <= sharedSeconds / 2;
		const shared = short ? groups.find((g) => g.short && g.seconds + duration <= sharedSeconds) : undefined;
		if (shared) {
			shared.indices.push(index);
			shared.seconds += duration!;
		} else groups.push({ indices: [index], seconds: duration ?? Infinity, short });
	}
	return groups.map((g) => g.indices.sort((x, y) => x - y));
}

/**
 * Aligns clips by their sound: read each clip's facts, decode each clip once (short ones several
 * to an ffmpeg run, runs in parallel), estimate every pair, then solve all offsets and drifts together.
 */
export async function alignFiles(paths: string[], options: AlignOptions = {}): Promise<AlignReport> {
	const concurrency = Math.max(1, options.concurrency ?? availableParallelism());
	const pairOptions: PairOptions = { ...defaultPairOptions, ...options.pairOptions };
	const sampleRate = options.analysisSampleRate ?? 8000;
	const progress = options.onProgress ?? (() => {});

	const stop = new AbortController();
	const stopDecodes = () => stop.abort();
	options.signal?.addEventListener('abort', stopDecodes, { once: true });
	// MP4 and MOV files describe themselves in their moov box, read here in milliseconds; anything
	// else (or anything unusual) is asked of ffprobe, which runs beside the decodes.
	const inspections = await Promise.all(paths.map((path) => inspectMp4(path)));
	const quick = inspections.map((inspection) => ('facts' in inspection ? inspection.facts : null));
	// A declined file's header may still say how long it is: enough to plan the decodes by.
	const plannedSeconds = inspections.map((inspection) => ('facts' in inspection ? inspection.facts.durationSeconds : (inspection.movieSeconds ?? null)));
	// A file declined for its variable frame timing needs its frame times read as well: at once.
	const probing = paths.map((path, i) => {
		const inspection = inspections[i];
		if ('facts' in inspection) return Promise.resolve(inspection.facts);
		return probeMedia(path, inspection.declined === 'variable frame timing' ? { frameTimes: 'always' } : {});
	});
	for (const p of probing) p.catch(stopDecodes);
	const ready = paths.map(() => {
		let settle: (prepared: Promise<PreparedSound | null>) => void = () => {};
		const promise = new Promise<PreparedSound | null>((resolve) => (settle = resolve));
		promise.catch(() => {}); // a failed decode is reported from `decodes` below
		return { promise, settle };
	});
	const sounds: DecodedPcm[] = [];
	let decoded = 0;
	// A clip its facts show to have no sound is not decoded: nothing aligns it.
	const silent = quick.map((facts) => facts !== null && !facts.audio);
	silent.forEach((isSilent, i) => isSilent && ready[i].settle(Promise.resolve(null)));
	const toDecode = paths.map((_, i) => i).filter((i) => !silent[i]);
	const groups = decodeGroups(toDecode.map((i) => plannedSeconds[i])).map((g) => g.map((k) => toDecode[k]));
	// Up to twice as many ffmpeg runs as cores at once: with three long clips on two cores, two at
	// a time leaves the third to decode alone at the end while a core idles; all three at once
	// share both cores to the finish (and their envelopes are read as they are written).
	const decodes = mapLimited(groups, 2 * concurrency, async (group) => {
		// Each clip's envelope is built from its samples as ffmpeg writes them, while the run goes on.
		const envelopes = new Map<number, OnsetEnvelopeBuilder>();
		const follow = (k: number, samples: Int16Array | null) => {
			const index = group[k];
			if (!samples) envelopes.set(index, new OnsetEnvelopeBuilder(sampleRate, envelopeOptions(pairOptions, decodedFullScale), (plannedSeconds[index] ?? 0) * sampleRate));
			else envelopes.get(index)!.push(samples);
		};
		const results = await decodeSounds(
			group.map((i) => paths[i]),
			{ sampleRate, signal: stop.signal, follow }
		);
		return Promise.allSettled(
			results.map(async (result, k) => {
				const index = group[k];
				try {
					if (result.status === 'rejected') throw result.reason;
					sounds.push(result.value);
					// Where the sound starts comes from the clip's facts (ffprobe's may arrive after the decode).
					const sound: DecodedSound = { ...result.value, startSeconds: audioStartSeconds(await probing[index]) };
					const envelope = envelopes.get(index)!.finish(sound.startSeconds);
					ready[index].settle(Promise.resolve({ sound, envelope, levelDb: levelDbOf(envelope) }));
				} catch (error) {
					// A clip without sound is aligned by nothing, not an error: its probe says so.
					const probed = await probing[index].catch(() => null);
					if (probed && !probed.audio) {
						ready[index].settle(Promise.resolve(null));
						return;
					}
					ready[index].settle(Promise.reject(error));
					throw error;
				} finally {
					progress({ stage: 'decode', done: ++decoded, total: paths.length });
				}
			})
		);
	});

	const probed = await Promise.allSettled(probing);
	const failures = probed.flatMap((p, i) =>
		p.status === 'rejected' ? [p.reason instanceof MediaReadError ? p.reason : new MediaReadError(paths[i], String(p.reason))] : []
	);
	if (failures.length) {
		await decodes;
		sounds.forEach(releaseSound);
		options.signal?.removeEventListener('abort', stopDecodes);
		throw new MediaReadErrors(failures);
	}
	const probes = probed.flatMap((p) => (p.status === 'fulfilled' ? [p.value] : []));
	progress({ stage: 'probe', done: probes.length, total: probes.length });

	const totalSeconds = probes.reduce((sum, p) => sum + p.durationSeconds, 0);
	const usePool = options.workers === 'pool' || ((options.workers ?? 'auto') === 'auto' && concurrency >= 4 && paths.length >= 4 && totalSeconds > 300);
	const worker = usePool ? await workerFile() : null;
	// Loaded only when threads are used: a few laps of a statue align faster without them.
	const PiscinaPool = worker ? (await import('piscina')).Piscina : null;
	const pool: Piscina<AlignTask, AlignTaskResult> | null = worker && PiscinaPool
		? new PiscinaPool<AlignTask, AlignTaskResult>({
				filename: worker.url,
				maxThreads: concurrency,
				minThreads: concurrency,
				// Plain JavaScript needs no TypeScript loader in the threads (they would inherit tsx's otherwise).
				...(worker.plainJavaScript ? { execArgv: [] } : {})
			})
		: null;
	const runTask = async (task: AlignTask): Promise<AlignTaskResult> => (pool ? pool.run(task) : runAlignTask(task));
	const estimate = async (a: PreparedSound, b: PreparedSound): Promise<PairEstimate> => {
		return (await runTask({ a, b, options: pairOptions })).estimate;
	};
	try {
		const pairIndices: [number, number][] = [];
		for (let a = 0; a < paths.length; a++) for (let b = a + 1; b < paths.length; b++) pairIndices.push([a, b]);
		let pairsDone = 0;
		const pairsSettled = Promise.allSettled(
			pairIndices.map(async ([a, b]) => {
				const [trackA, trackB] = await Promise.all([ready[a].promise, ready[b].promise]);
				const result = trackA && trackB ? await estimate(trackA, trackB) : null;
				progress({ stage: 'pairs', done: ++pairsDone, total: pairIndices.length });
				return result ? { a, b, estimate: result } : null;
			})
		);
		const decodeResults = (await decodes).flatMap((group) => (group.status === 'fulfilled' ? group.value : [group]));
		const decodeFailures = decodeResults.flatMap((r) =>
			r.status === 'rejected' ? [r.reason instanceof MediaReadError ? r.reason : new MediaReadError('?', String(r.reason))] : []
		);
		if (decodeFailures.length) {
			await pairsSettled;
			throw new MediaReadErrors(decodeFailures);
		}
		const pairs = (await pairsSettled).map((r) => {
			if (r.status === 'rejected') throw r.reason;
			return r.value;
		});
		const pairResults = pairs.filter((p): p is PairResult => p !== null);
		const solution = solveSession(paths.length, pairResults, { referenceIndex: options.referenceIndex });
		progress({ stage: 'solve', done: 1, total: 1 });

		const clips: AlignedClip[] = probes.map((probe, i) => {
			const solved = solution.clips[i];
			const notes: string[] = [];
			if (!probe.audio) notes.push('no audio stream: cannot be aligned by sound');
			else if (!solved.matched) notes.push('no sound in common with the reference or the clips placed through it');
			else if (!solved.driftMeasured) notes.push('drift not measured (overlap too short): set to 0');
			return {
				path: probe.path,
				probe,
				matched: solved.matched,
				offsetSeconds: solved.offsetSeconds,
				driftPpm: solved.driftPpm,
				driftMeasured: solved.driftMeasured,
				confidence: solved.confidence,
				frameRate: probe.video?.frameRate ?? probe.video?.averageFrameRate ?? null,
				variableFrameRate: probe.video?.variableFrameRate ?? false,
				durationSeconds: probe.durationSeconds,
				mediaSpan: { start: probe.startSeconds, end: probe.startSeconds + probe.durationSeconds },
				frames: frameTimingOf(probe),
				notes
			};
		});
		return { referenceIndex: solution.referenceIndex, clips, pairs: pairResults, solution, commonSpan: commonSpanOf(clips) };
	} finally {
		options.signal?.removeEventListener('abort', stopDecodes);
		await pool?.destroy();
		worker?.cleanup();
		sounds.forEach(releaseSound);
	}
}

/**
 * Where every matched clip has media and, for clips with video, a frame within half a frame of
 * each instant: a timing table over this span names a frame for every camera at every row.
 */
export function commonSpanOf(clips: AlignedClip[]): { start: number; end: number } | null {
	let start = Number.NEGATIVE_INFINITY;
	let end = Number.POSITIVE_INFINITY;
	for (const clip of clips) {
		if (!clip.matched || clip.offsetSeconds === null || clip.driftPpm === null) continue;
		const placement = { offsetSeconds: clip.offsetSeconds, driftPpm: clip.driftPpm };
		const frameSpan = clip.frames ? frameSpanSeconds(clip.frames) : null;
		const clipStart = frameSpan ? Math.max(clip.mediaSpan.start, frameSpan.start) : clip.mediaSpan.start;
		const clipEnd = frameSpan ? Math.min(clip.mediaSpan.end, frameSpan.end) : clip.mediaSpan.end;
		start = Math.max(start, sessionTimeOf(clipStart, placement));
		end = Math.min(end, sessionTimeOf(clipEnd, placement));
	}
	return Number.isFinite(start) && Number.isFinite(end) && end > start ? { start, end } : null;
}

/** Each matched clip's nearest frame at session instants every `everySeconds` across the common span. */
export function frameRows(report: AlignReport, everySeconds: number): { t: number; frames: (number | null)[] }[] {
	const span = report.commonSpan;
	if (!span || !(everySeconds > 0)) return [];
	const rows: { t: number; frames: (number | null)[] }[] = [];
	for (let i = 0; ; i++) {
		const t = span.start + i * everySeconds;
		if (t > span.end + 1e-9) break;
		rows.push({
			t,
			frames: report.clips.map((clip) =>
				clip.matched && clip.frames && clip.offsetSeconds !== null && clip.driftPpm !== null
					? frameAt(t, { placement: { offsetSeconds: clip.offsetSeconds, driftPpm: clip.driftPpm }, frames: clip.frames })
					: null
			)
		});
	}
	return rows;
}
