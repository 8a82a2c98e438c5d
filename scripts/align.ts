/**
 * Lines clips up by their sound and prints where each sits on the session timeline.
 *   npm run --silent align -- [--json] [--reference FILE] [--every SECONDS] FILE...
 */
import { resolve } from 'node:path';
import { formatRational } from '../src/lib/sync/rational';
import { alignFiles, frameRows, MediaReadErrors, type AlignProgress, type AlignReport } from '../src/lib/server/media/align-runner';

interface Arguments {
	json: boolean;
	reference: string | null;
	everySeconds: number | null;
	files: string[];
}

function usage(message: string): never {
	process.stderr.write(`align: ${message}\nusage: npm run --silent align -- [--json] [--reference FILE] [--every SECONDS] FILE...\n`);
	process.exit(2);
}

function parseArguments(argv: string[]): Arguments {
	const parsed: Arguments = { json: false, reference: null, everySeconds: null, files: [] };
	for (let i = 0; i < argv.length; i++) {
		const arg = argv[i];
		if (arg === '--json') parsed.json = true;
		else if (arg === '--reference') parsed.reference = argv[++i] ?? usage('--reference needs a FILE');
		else if (arg === '--every') {
			const value = Number(argv[++i]);
			if (!(value > 0)) usage('--every needs a positive number of seconds');
			parsed.everySeconds = value;
		} else if (arg === '--') continue;
		else if (arg.startsWith('--')) usage(`unknown option ${arg}`);
		else parsed.files.push(arg);
	}
	if (parsed.files.length === 0) usage('no files given');
	return parsed;
}

const round = (value: number, digits: number) => Number(value.toFixed(digits));

function toJson(report: AlignReport, files: string[], everySeconds: number | null) {
	const span = report.commonSpan;
	return {
		reference: files[report.referenceIndex],
		clips: report.clips.map((clip, i) => ({
			file: files[i],
			offsetSeconds: clip.offsetSeconds === null ? null : round(clip.offsetSeconds, 7),
			driftPpm: clip.driftPpm === null ? null : round(clip.driftPpm, 3),
			confidence: round(clip.confidence, 3),
			matched: clip.matched,
			frameRate: clip.frameRate ? formatRational(clip.frameRate) : null,
			variableFrameRate: clip.variableFrameRate,
			durationSeconds: round(clip.durationSeconds, 6)
		})),
		commonSpan: span ? { start: round(span.start, 6), end: round(span.end, 6) } : null,
		...(everySeconds ? { rows: frameRows(report, everySeconds).map((row) => ({ t: round(row.t, 6), frames: row.frames })) } : {})
	};
}

function confidenceWord(confidence: number): string {
	return confidence >= 0.8 ? 'high' : confidence >= 0.5 ? 'fair' : 'low';
}

function toTable(report: AlignReport, files: string[], everySeconds: number | null): string {
	const header = ['file', 'offset s', 'drift ppm', 'confidence', 'matched', 'frame rate', 'duration s'];
	const body = report.clips.map((clip, i) => [
		files[i] + (i === report.referenceIndex ? ' (reference)' : ''),
		clip.offsetSeconds === null ? '—' : clip.offsetSeconds.toFixed(6),
		clip.driftPpm === null ? '—' : clip.driftPpm.toFixed(2) + (clip.driftMeasured ? '' : ' (not measured)'),
		`${confidenceWord(clip.confidence)} ${clip.confidence.toFixed(2)}`,
		clip.matched ? 'yes' : 'no',
		(clip.frameRate ? formatRational(clip.frameRate) : '—') + (clip.variableFrameRate ? ' variable' : ''),
		clip.durationSeconds.toFixed(3)
	]);
	const widths = header.map((h, c) => Math.max(h.length, ...body.map((row) => row[c].length)));
	const line = (cells: string[]) => cells.map((cell, c) => (c === 0 ? cell.padEnd(widths[c]) : cell.padStart(widths[c]))).join('  ');
	const out = [line(header), widths.map((w) => '─'.repeat(w)).join('  '), ...body.map(line), ''];
	const span = report.commonSpan;
	out.push(span ? `common span: ${span.start.toFixed(3)} s – ${span.end.toFixed(3)} s (${(span.end - span.start).toFixed(3)} s)` : 'common span: none');
	out.push(`largest disagreement between pairs: ${report.solution.maxInconsistencyMs.toFixed(3)} ms`);
	for (const note of report.solution.notes) out.push(`note: ${note}`);
	for (const [i, clip] of report.clips.entries()) for (const note of clip.notes) out.push(`${files[i]}: ${note}`);
	if (everySeconds) {
		out.push('', ['t s', ...files].join('\t'));
		for (const row of frameRows(report, everySeconds)) out.push([row.t.toFixed(3), ...row.frames.map((f) => (f === null ? '—' : String(f)))].join('\t'));
	}
	return out.join('\n') + '\n';
}

async function main() {
	const startedAt = performance.now();
	const args = parseArguments(process.argv.slice(2));
	let referenceIndex: number | undefined;
	if (args.reference !== null) {
		const wanted = resolve(args.reference);
		referenceIndex = args.files.findIndex((f) => f === args.reference || resolve(f) === wanted);
		if (referenceIndex < 0) usage(`--reference ${args.reference} is not one of the files`);
	}
	try {
		// The correlation view is for the workbench's plot; this command prints no such thing.
		// For the benchmark: when each stage's steps finished, in ms since this process began.
		const stages: string[] = [];
		const onProgress = process.env.LOCKSTEP_ALIGN_STATS
			? (p: AlignProgress) => stages.push(`${p.stage} ${p.done}/${p.total} ${performance.now().toFixed(0)}`)
			: undefined;
		const report = await alignFiles(args.files, { referenceIndex, pairOptions: { keepCorrelationView: false }, onProgress });
		process.stdout.write(args.json ? JSON.stringify(toJson(report, args.files, args.everySeconds)) + '\n' : toTable(report, args.files, args.everySeconds));
		// For the benchmark: time inside this process and its peak memory (worker threads included).
		if (process.env.LOCKSTEP_ALIGN_STATS) {
			const stats = { alignMs: performance.now() - startedAt, maxRssKb: process.resourceUsage().maxRSS, stages };
			process.stderr.write(`${JSON.stringify({ alignStats: stats })}\n`);
		}
	} catch (error) {
		if (error instanceof MediaReadErrors) {
			for (const e of error.errors) process.stderr.write(`align: cannot read ${e.path}: ${e.reason}\n`);
			process.exit(1);
		}
		throw error;
	}
}

await main();
