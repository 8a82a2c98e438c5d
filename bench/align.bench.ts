/**
 * Accuracy and speed of `align` on every fixture case, written to bench/RESULTS.md.
 *   npm run bench:align -- [--case NAME]... [--no-generate] [--committed-only] [--repeat N]
 * Large cases are generated first (npm run fixtures -- --case NAME) unless --no-generate.
 */
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { availableParallelism, cpus, loadavg, tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { CASES } from '../scripts/fixtures/scenarios';
import { truthRelativeTo, type Truth } from '../scripts/fixtures/truth';
import { describeMediaBinaries, mediaBinaries } from '../src/lib/server/media/binaries';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const parallel = Math.min(2, availableParallelism());

interface AlignJson {
	reference: string;
	clips: { file: string; offsetSeconds: number | null; driftPpm: number | null; confidence: number; matched: boolean; durationSeconds: number }[];
}

interface ClipResult {
	file: string;
	durationSeconds: number;
	truthMatched: boolean;
	matched: boolean;
	confidence: number;
	mappingErrorMs: number | null;
	driftErrorPpm: number | null;
	verdict: 'ok' | 'off' | 'false match' | 'missed' | 'unmatched (right)' | 'reference';
}

interface CaseResult {
	name: string;
	description: string;
	clips: ClipResult[];
	reference: string;
	alignWallSeconds: number;
	alignInProcessSeconds: number | null;
	bareDecodeSeconds: number;
	alignCpuSeconds: number;
	bareDecodeCpuSeconds: number;
	loadAverage: number;
	peakRssMb: number;
	mediaSeconds: number;
}

function run(command: string, args: string[], env: NodeJS.ProcessEnv = process.env): Promise<{ code: number; stdout: string; stderr: string }> {
	return new Promise((resolvePromise, reject) => {
		const child = spawn(command, args, { env, stdio: ['ignore', 'pipe', 'pipe'] });
		let stdout = '';
		let stderr = '';
		child.stdout.on('data', (d) => (stdout += d));
		child.stderr.on('data', (d) => (stderr += d));
		child.on('error', reject);
		child.on('close', (code) => resolvePromise({ code: code ?? -1, stdout, stderr }));
	});
}

/** The floor: ffmpeg alone decoding every clip's audio, as many at once as align runs. Wall and CPU seconds. */
async function bareDecode(files: string[]): Promise<{ wall: number; cpu: number }> {
	const started = performance.now();
	let next = 0;
	let cpu = 0;
	const { ffmpegPath } = mediaBinaries();
	const dir = mkdtempSync(join(tmpdir(), 'decode-bench-'));
	await Promise.all(
		Array.from({ length: parallel }, async (_, lane) => {
			while (next < files.length) {
				const file = files[next++];
				const timeFile = join(dir, `time-${lane}.txt`);
				const result = await run('/usr/bin/time', ['-f', '%U %S', '-o', timeFile, ffmpegPath, '-nostdin', '-v', 'error', '-i', file, '-map', '0:a:0', '-vn', '-f', 'null', '-']);
				if (result.code !== 0) throw new Error(`ffmpeg could not decode ${file}: ${result.stderr}`);
				const [user, system] = readFileSync(timeFile, 'utf8').trim().split('\n').pop()!.split(' ').map(Number);
				cpu += user + system;
			}
		})
	);
	rmSync(dir, { recursive: true, force: true });
	return { wall: (performance.now() - started) / 1000, cpu };
}

async function runAlign(files: string[]) {
	const dir = mkdtempSync(join(tmpdir(), 'align-bench-'));
	const timeFile = join(dir, 'time.txt');
	const started = performance.now();
	const result = await run('/usr/bin/time', ['-f', '%M %e %U %S', '-o', timeFile, process.execPath, join(root, 'scripts/engine.mjs'), 'align', '--json', ...files], {
		...process.env,
		LOCKSTEP_ALIGN_STATS: '1'
	});
	const wall = (performance.now() - started) / 1000;
	const [maxRssKb, , user, system] = readFileSync(timeFile, 'utf8').trim().split('\n').pop()!.split(' ').map(Number);
	rmSync(dir, { recursive: true, force: true });
	if (result.code !== 0) throw new Error(`align failed (${result.code}): ${result.stderr}`);
	const statsLine = result.stderr.split('\n').find((l) => l.includes('alignStats'));
	const stats = statsLine ? (JSON.parse(statsLine).alignStats as { alignMs: number; maxRssKb: number }) : null;
	return {
		json: JSON.parse(result.stdout) as AlignJson,
		wall,
		inProcess: stats ? stats.alignMs / 1000 : null,
		// CPU of the whole process tree: node, its worker threads and the ffmpeg children it waited for.
		cpu: user + system,
		peakRssMb: Math.max(maxRssKb, stats?.maxRssKb ?? 0) / 1024
	};
}

function judge(truth: Truth, output: AlignJson, dir: string): ClipResult[] {
	const referenceFile = output.reference.slice(dir.length + 1);
	const referenceTruth = truth.clips.find((c) => c.file === referenceFile);
	const relative = referenceTruth?.matched ? truthRelativeTo(truth, referenceFile) : null;
	return output.clips.map((clip, i) => {
		const t = truth.clips[i];
		const rel = relative?.clips[i];
		const base = { file: t.file, durationSeconds: t.durationSeconds, truthMatched: t.matched, matched: clip.matched, confidence: clip.confidence };
		if (!t.matched) return { ...base, mappingErrorMs: null, driftErrorPpm: null, verdict: clip.matched ? 'false match' : 'unmatched (right)' };
		if (!clip.matched || clip.offsetSeconds === null || clip.driftPpm === null || !rel || rel.offsetSeconds === null || rel.driftPpm === null) {
			return { ...base, mappingErrorMs: null, driftErrorPpm: null, verdict: 'missed' };
		}
		// The difference of two lines is largest at an end of the clip.
		const at = (time: number, o: number, d: number) => o + time * (1 + d * 1e-6);
		const errors = [0, t.durationSeconds].map((time) => Math.abs(at(time, clip.offsetSeconds!, clip.driftPpm!) - at(time, rel.offsetSeconds!, rel.driftPpm!)));
		const mappingErrorMs = Math.max(...errors) * 1e3;
		const driftErrorPpm = Math.abs(clip.driftPpm - rel.driftPpm);
		const isReference = output.reference.endsWith(t.file) && clip.offsetSeconds === 0;
		return {
			...base,
			mappingErrorMs,
			driftErrorPpm,
			verdict: isReference ? 'reference' : mappingErrorMs <= 0.5 && (t.durationSeconds < 300 || driftErrorPpm <= 0.5) ? 'ok' : 'off'
		};
	});
}

function median(values: number[]): number {
	const sorted = [...values].sort((x, y) => x - y);
	const middle = sorted.length >> 1;
	return sorted.length % 2 ? sorted[middle] : (sorted[middle - 1] + sorted[middle]) / 2;
}

function report(results: CaseResult[], skipped: string[], repeat: number): string {
	const f = (x: number | null, d: number) => (x === null ? '—' : x.toFixed(d));
	const lines: string[] = [
		'# Alignment benchmark',
		'',
		`Written by \`npm run bench:align\` on ${new Date().toISOString().slice(0, 10)}; ${cpus().length} cores (${cpus()[0]?.model ?? 'unknown'}), Node ${process.version}; ${describeMediaBinaries()}.`,
		'The machine is shared with other work, so times move from run to run; accuracy does not.',
		'',
		'Targets: matched clips within 0.5 ms (mapping error = largest |predicted − true session time| over the clip); drift within 0.5 ppm on clips of 5 minutes or more;',
		'no clip without common sound matched; align ≤ 1.5× bare decode; three 60-minute clips under 1 GB.',
		'',
		'## Per case',
		'',
		'| case | media s | align wall s | align in-process s | bare decode s | wall ÷ decode | in-process ÷ decode | align CPU s | decode CPU s | CPU ÷ decode CPU | peak RSS MB | load avg |',
		'|---|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|'
	];
	for (const r of results) {
		lines.push(
			`| ${r.name} | ${r.mediaSeconds.toFixed(0)} | ${f(r.alignWallSeconds, 2)} | ${f(r.alignInProcessSeconds, 2)} | ${f(r.bareDecodeSeconds, 2)} | ${f(r.alignWallSeconds / r.bareDecodeSeconds, 2)} | ${r.alignInProcessSeconds === null ? '—' : f(r.alignInProcessSeconds / r.bareDecodeSeconds, 2)} | ${f(r.alignCpuSeconds, 2)} | ${f(r.bareDecodeCpuSeconds, 2)} | ${f(r.alignCpuSeconds / r.bareDecodeCpuSeconds, 2)} | ${f(r.peakRssMb, 0)} | ${f(r.loadAverage, 1)} |`
		);
	}
	lines.push('', '"align wall" is the whole `node scripts/engine.mjs align --json` process (what `npm run align` runs, without npm\'s own start-up), Node start-up included; "in-process" is from argument parsing to the printed result. Bare decode: `ffmpeg -i FILE -map 0:a:0 -vn -f null -` for every clip, ' + parallel + ' at a time. Align and decode take turns, each time the median of ' + repeat + ' runs. CPU columns are user + system seconds of the whole process tree (GNU time), less sensitive than wall time to other work on the machine; "load avg" is the 1-minute load average around the case (2 cores: anything above 2 means the run was waiting for CPU).', '', '## Per clip', '');
	lines.push('| case | clip | duration s | truth | matched | confidence | mapping error ms | drift error ppm | verdict |', '|---|---|---:|---|---|---:|---:|---:|---|');
	for (const r of results) {
		for (const c of r.clips) {
			lines.push(
				`| ${r.name} | ${c.file}${r.reference.endsWith(c.file) ? ' (ref)' : ''} | ${c.durationSeconds.toFixed(1)} | ${c.truthMatched ? 'shares sound' : 'no common sound'} | ${c.matched ? 'yes' : 'no'} | ${c.confidence.toFixed(3)} | ${f(c.mappingErrorMs, 4)} | ${f(c.driftErrorPpm, 3)} | ${c.verdict} |`
			);
		}
	}
	const all = results.flatMap((r) => r.clips);
	const matched = all.filter((c) => c.mappingErrorMs !== null && c.verdict !== 'reference');
	const long = matched.filter((c) => c.durationSeconds >= 300);
	const three = results.find((r) => r.name === 'three-hours');
	lines.push(
		'',
		'## Against the targets',
		'',
		`- Mapping error of matched clips: worst ${f(Math.max(0, ...matched.map((c) => c.mappingErrorMs!)), 4)} ms over ${matched.length} clips (target ≤ 0.5 ms).`,
		`- Drift error on clips ≥ 5 min: worst ${long.length ? f(Math.max(...long.map((c) => c.driftErrorPpm!)), 3) : '—'} ppm over ${long.length} clips (target ≤ 0.5 ppm).`,
		`- Clips without common sound reported matched: ${all.filter((c) => c.verdict === 'false match').length} (target 0); clips with common sound missed: ${all.filter((c) => c.verdict === 'missed').length}.`,
		`- CPU, align ÷ bare decode: worst ${f(Math.max(...results.map((r) => r.alignCpuSeconds / r.bareDecodeCpuSeconds)), 2)}×, best ${f(Math.min(...results.map((r) => r.alignCpuSeconds / r.bareDecodeCpuSeconds)), 2)}×.`,
		`- Speed, in-process align ÷ bare decode: worst ${f(Math.max(...results.map((r) => (r.alignInProcessSeconds ?? r.alignWallSeconds) / r.bareDecodeSeconds)), 2)}× (target ≤ 1.5×); whole process ÷ decode: worst ${f(Math.max(...results.map((r) => r.alignWallSeconds / r.bareDecodeSeconds)), 2)}×.`,
		`- Three 60-minute clips: ${three ? `${f(three.peakRssMb, 0)} MB peak RSS (target < 1024 MB)` : 'not run'}.`
	);
	if (skipped.length) lines.push('', `Not run: ${skipped.join('; ')}.`);
	return lines.join('\n') + '\n';
}

async function main() {
	const args = process.argv.slice(2);
	const only = args.flatMap((a, i) => (args[i - 1] === '--case' ? [a] : []));
	const generate = !args.includes('--no-generate');
	const committedOnly = args.includes('--committed-only');
	const repeatAt = args.indexOf('--repeat');
	const repeat = repeatAt >= 0 ? Math.max(1, Number(args[repeatAt + 1]) || 1) : 3;
	// Bundle the engine once (scripts/engine.mjs) so no case pays for it.
	spawnSync(process.execPath, [join(root, 'scripts/engine.mjs'), 'align'], { cwd: root, stdio: 'ignore' });
	const results: CaseResult[] = [];
	const skipped: string[] = [];
	for (const spec of CASES) {
		if (only.length && !only.includes(spec.name)) continue;
		if (committedOnly && !spec.committed) continue;
		const dir = spec.committed ? join(root, 'fixtures', spec.name) : join(root, 'fixtures', 'generated', spec.name);
		if (!existsSync(join(dir, 'truth.json')) && !spec.committed && generate) {
			console.error(`generating ${spec.name} …`);
			spawnSync('npm', ['run', '--silent', 'fixtures', '--', '--case', spec.name], { cwd: root, stdio: 'inherit' });
		}
		if (!existsSync(join(dir, 'truth.json'))) {
			skipped.push(`${spec.name} (no ${join(dir, 'truth.json')})`);
			continue;
		}
		const truth = JSON.parse(readFileSync(join(dir, 'truth.json'), 'utf8')) as Truth;
		const files = truth.clips.map((c) => join(dir, c.file));
		console.error(`${spec.name}: ${files.length} clips`);
		const loadBefore = loadavg()[0];
		// Decode and align take turns, `repeat` times each, and the medians are kept: other work on a
		// shared machine then weighs on both sides alike.
		const decodes = [await bareDecode(files)];
		const aligns: Awaited<ReturnType<typeof runAlign>>[] = [];
		for (let i = 0; i < repeat; i++) {
			aligns.push(await runAlign(files));
			decodes.push(await bareDecode(files));
		}
		const align = aligns[0];
		const clips = judge(truth, align.json, dir);
		results.push({
			name: spec.name,
			description: truth.description,
			clips,
			reference: align.json.reference,
			alignWallSeconds: median(aligns.map((a) => a.wall)),
			alignInProcessSeconds: aligns.every((a) => a.inProcess !== null) ? median(aligns.map((a) => a.inProcess!)) : null,
			bareDecodeSeconds: median(decodes.map((d) => d.wall)),
			alignCpuSeconds: median(aligns.map((a) => a.cpu)),
			bareDecodeCpuSeconds: median(decodes.map((d) => d.cpu)),
			loadAverage: (loadBefore + loadavg()[0]) / 2,
			peakRssMb: Math.max(...aligns.map((a) => a.peakRssMb)),
			mediaSeconds: truth.clips.reduce((s, c) => s + c.durationSeconds, 0)
		});
		const r = results[results.length - 1];
		console.error(
			`  align ${r.alignWallSeconds.toFixed(2)} s (in-process ${r.alignInProcessSeconds?.toFixed(2)} s, CPU ${r.alignCpuSeconds.toFixed(2)} s), decode ${r.bareDecodeSeconds.toFixed(2)} s (CPU ${r.bareDecodeCpuSeconds.toFixed(2)} s), ${r.peakRssMb.toFixed(0)} MB, load ${r.loadAverage.toFixed(1)}; ` +
				clips.map((c) => `${c.file}: ${c.verdict}${c.mappingErrorMs !== null ? ` ${c.mappingErrorMs.toFixed(3)} ms ${c.driftErrorPpm!.toFixed(2)} ppm` : ''}`).join(', ')
		);
	}
	const text = report(results, skipped, repeat);
	writeFileSync(join(root, 'bench', 'RESULTS.md'), text);
	process.stdout.write(text);
}

await main();
