/*
 * The exports against real media: the extraction script run on fixture clips whose picture
 * carries each frame's number (fixtures/README.md, "frameCode"), and the `align --json --every`
 * rows of the CLI against the export's rows for the same clips.
 */
import { execFile, spawn } from 'node:child_process';
import { createRequire } from 'node:module';
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { promisify } from 'node:util';
import { afterAll, describe, expect, it } from 'vitest';
import { extractionScript, framesPerCamera } from '../sync/exporters/script';
import { buildTimingTable, frameTimingOfStored, type InstantChoice, type TableClipInput } from '../sync/timing-table';
import { probeMedia } from './media/probe';

const run = promisify(execFile);
const root = resolve(dirname(fileURLToPath(import.meta.url)), '../../..');
const require = createRequire(import.meta.url);

interface TruthFile {
	frameCode: { bits: number; x: number; y: number; cellWidth: number; cellHeight: number };
	clips: { file: string; camera: string; position: 'high' | 'mid' | 'low' | 'other'; matched: boolean; offsetSeconds: number | null; driftPpm: number | null; width: number; height: number }[];
}

const truthOf = (name: string) => JSON.parse(readFileSync(join(root, 'fixtures', name, 'truth.json'), 'utf8')) as TruthFile;

/** A clip as the probe job stores it, then back to the table's input: the export's own path. */
async function tableClip(caseName: string, file: string, label: string, position: TableClipInput['position'], placement: { offsetSeconds: number; driftPpm: number }, isReference: boolean): Promise<TableClipInput> {
	const probe = await probeMedia(join(root, 'fixtures', caseName, file), { frameTimes: 'auto' });
	const video = probe.video!;
	const stored = {
		frameRateNum: video.frameRate?.num ?? null,
		frameRateDen: video.frameRate?.den ?? null,
		variableFrameRate: video.variableFrameRate,
		videoStartSeconds: video.startSeconds,
		durationSeconds: probe.durationSeconds,
		probeJson: JSON.stringify({ averageFrameRate: video.averageFrameRate, frameCount: video.frameCount, videoDurationSeconds: video.durationSeconds })
	};
	const timing = frameTimingOfStored(stored, video.frameTimesSeconds ? Array.from(video.frameTimesSeconds) : null)!;
	return { id: file, label, position, fileName: file, isReference, placement, frameRate: timing.frameRate, variableFrameRate: video.variableFrameRate, frames: timing.frames, embeddedTimecode: probe.timecode };
}

async function truthClips(caseName: string): Promise<TableClipInput[]> {
	const truth = truthOf(caseName);
	return Promise.all(
		truth.clips
			.filter((c) => c.matched)
			.map((c, i) => tableClip(caseName, c.file, c.camera, c.position, { offsetSeconds: c.offsetSeconds!, driftPpm: c.driftPpm! }, i === 0))
	);
}

/** The frame numbers drawn as a 16-cell binary code in each image (fixtures/README.md "The picture"), one ffmpeg for all. */
async function frameCodesOf(dir: string, count: number, width: number, height: number, code: TruthFile['frameCode']): Promise<number[]> {
	const { stdout } = await run('ffmpeg', ['-v', 'error', '-pattern_type', 'glob', '-i', join(dir, '*.png'), '-f', 'rawvideo', '-pix_fmt', 'gray', '-'], { encoding: 'buffer', maxBuffer: 1 << 26 });
	expect(stdout.length).toBe(count * width * height);
	return Array.from({ length: count }, (_, image) => {
		let value = 0;
		for (let i = 0; i < code.bits; i++) {
			const x = code.x + i * code.cellWidth + Math.floor(code.cellWidth / 2);
			const y = code.y + Math.floor(code.cellHeight / 2);
			value = value * 2 + (stdout[image * width * height + y * width + x] > 128 ? 1 : 0);
		}
		return value;
	});
}

const ffmpegs: [string, string][] = [['system ffmpeg (Debian 5.1)', 'ffmpeg']];
try {
	ffmpegs.push(['npm-packaged ffmpeg (about 4.1)', require('@ffmpeg-installer/ffmpeg').path as string]);
} catch {
	// Only the system one then.
}

const scratch: string[] = [];
afterAll(() => scratch.forEach((dir) => rmSync(dir, { recursive: true, force: true })));

const cases: [string, InstantChoice][] = [
	['fountain-lap', { kind: 'count', count: 24 }],
	['vfr-phone', { kind: 'every', everySeconds: 1.37 }]
];

describe('the extraction script on clips that show their frame numbers', () => {
	for (const [caseName, instants] of cases) {
		for (const [ffmpegName, ffmpegPath] of ffmpegs) {
			it(`${caseName} with ${ffmpegName}: every image shows the frame the table lists`, async () => {
				if (!existsSync(join(root, 'fixtures', caseName, 'truth.json'))) throw new Error(`fixture ${caseName} missing: npm run fixtures`);
				const truth = truthOf(caseName);
				const clips = await truthClips(caseName);
				// The span where every matched clip has frames, as the workbench's default usable span.
				const start = Math.max(...clips.map((c) => c.placement.offsetSeconds)) + 0.1;
				const end = Math.min(...clips.map((c) => c.placement.offsetSeconds + (c.frames.kind === 'constant' ? c.frames.frameCount / (c.frameRate.num / c.frameRate.den) : c.frames.frameTimesSeconds[c.frames.frameTimesSeconds.length - 1]) * (1 + c.placement.driftPpm * 1e-6))) - 0.1;
				const table = buildTimingTable({
					session: { id: 't', name: `Fixture ${caseName}`, site: '', captureDate: null, status: 'approved', revision: 1 },
					usableSpan: { startSeconds: start, endSeconds: end },
					clips,
					instants
				});
				const dir = mkdtempSync(join(tmpdir(), 'lockstep-extract-'));
				scratch.push(dir);
				writeFileSync(join(dir, 'extract.sh'), extractionScript(table));
				// The brief asks for a POSIX script: run it with bash and with dash (sh) alike.
				const shell = ffmpegName.startsWith('system') ? 'bash' : 'sh';
				await run(shell, [join(dir, 'extract.sh'), join(root, 'fixtures', caseName), join(dir, 'out')], { env: { ...process.env, FFMPEG: ffmpegPath } });

				const expected = framesPerCamera(table);
				let checked = 0;
				for (const [c, clip] of table.clips.entries()) {
					const images = readdirSync(join(dir, 'out', clip.key)).sort();
					// Exactly the listed frames: nothing more (no leftovers), nothing missing.
					expect(images).toEqual(expected[c].map((f) => `${clip.key}_${String(f).padStart(6, '0')}.png`));
					const size = truth.clips.find((t) => t.file === clip.fileName)!;
					// The glob reads them in name order, which is frame order (zero-padded numbers).
					expect(await frameCodesOf(join(dir, 'out', clip.key), images.length, size.width, size.height, truth.frameCode)).toEqual(expected[c]);
					checked += images.length;
				}
				expect(checked).toBeGreaterThan(instants.kind === 'count' ? 60 : 40);
				// Every row's frame is among the images of its camera.
				for (const row of table.rows) row.cells.forEach((cell, c) => expect(expected[c]).toContain(cell!.index));
			}, 240_000);
		}
	}
});

interface AlignJson {
	clips: { file: string; offsetSeconds: number | null; driftPpm: number | null; matched: boolean }[];
	commonSpan: { start: number; end: number } | null;
	rows: { t: number; frames: (number | null)[] }[];
}

function alignCli(args: string[]): Promise<string> {
	return new Promise((done, fail) => {
		const child = spawn(join(root, 'node_modules/.bin/tsx'), [join(root, 'scripts/align.ts'), ...args], { cwd: root, stdio: ['ignore', 'pipe', 'pipe'] });
		let stdout = '';
		let stderr = '';
		child.stdout.on('data', (d) => (stdout += d));
		child.stderr.on('data', (d) => (stderr += d));
		child.on('error', fail);
		child.on('close', (code) => (code === 0 ? done(stdout) : fail(new Error(`align exited ${code}: ${stderr}`))));
	});
}

describe('the align command and the export agree', () => {
	for (const caseName of ['fountain-lap', 'vfr-phone']) {
		it(`${caseName}: the --every rows are the export's rows`, async () => {
			const truth = truthOf(caseName);
			const files = truth.clips.map((c) => `fixtures/${caseName}/${c.file}`);
			const out = JSON.parse(await alignCli(['--json', '--every', '0.5', ...files])) as AlignJson;
			const span = out.commonSpan!;
			const clips = await Promise.all(
				out.clips.map((c, i) =>
					tableClip(caseName, truth.clips[i].file, truth.clips[i].camera, truth.clips[i].position, { offsetSeconds: c.offsetSeconds!, driftPpm: c.driftPpm! }, c.offsetSeconds === 0)
				)
			);
			// The export of the same session: its usable span is the common span the alignment found.
			const table = buildTimingTable({
				session: { id: 't', name: caseName, site: '', captureDate: null, status: 'aligned', revision: 2 },
				usableSpan: { startSeconds: span.start, endSeconds: span.end },
				clips,
				instants: { kind: 'every', everySeconds: 0.5 }
			});
			expect(out.rows.length).toBeGreaterThan(60);
			expect(table.rows).toHaveLength(out.rows.length);
			const disagreements = out.rows.flatMap((row, i) => {
				const mine = table.rows[i].cells.map((cell) => cell?.index ?? null);
				return Math.abs(row.t - table.rows[i].sessionSeconds) > 1e-6 || mine.some((f, c) => f !== row.frames[c]) ? [{ t: row.t, cli: row.frames, exported: mine }] : [];
			});
			expect(disagreements).toEqual([]);
		}, 300_000);
	}
});
