/*
 * The server's alignment job runs this in a child process of its own: the engine's memory
 * stays out of the web server, a cancel is a kill, and a crash fails one job, not the site.
 * Input: one JSON argument {paths, referenceIndex?}. Output: progress lines on stderr
 * ({"stage","done","total"}), then one JSON result on stdout.
 */
import { alignFiles, MediaReadErrors } from '../src/lib/server/media/align-runner';

interface AlignJobInput {
	paths: string[];
	referenceIndex?: number;
}

const input = JSON.parse(process.argv[2] ?? '{}') as AlignJobInput;
try {
	const report = await alignFiles(input.paths, {
		referenceIndex: input.referenceIndex,
		onProgress: (p) => process.stderr.write(JSON.stringify(p) + '\n')
	});
	const result = {
		referenceIndex: report.referenceIndex,
		commonSpan: report.commonSpan,
		maxInconsistencyMs: report.solution.maxInconsistencyMs,
		notes: report.solution.notes,
		clips: report.clips.map((c) => ({
			matched: c.matched,
			offsetSeconds: c.offsetSeconds,
			driftPpm: c.driftPpm,
			driftMeasured: c.driftMeasured,
			confidence: c.confidence,
			notes: c.notes
		})),
		pairs: report.pairs.map((p) => ({
			a: p.a,
			b: p.b,
			matched: p.estimate.matched,
			confidence: p.estimate.confidence,
			offsetSeconds: p.estimate.offsetSeconds,
			driftPpm: p.estimate.driftPpm,
			driftMeasured: p.estimate.driftMeasured,
			overlapSeconds: p.estimate.overlapSeconds,
			coarse: p.estimate.coarse,
			windows: p.estimate.windows,
			notes: p.estimate.notes,
			correlation: p.estimate.correlation ?? null
		})),
		links: report.solution.links
	};
	process.stdout.write(JSON.stringify(result) + '\n');
} catch (error) {
	const message = error instanceof MediaReadErrors ? error.message : error instanceof Error ? error.message : String(error);
	process.stderr.write(JSON.stringify({ error: message }) + '\n');
	process.exit(2);
}
