/*
 * How long a nudge takes to reach the screen on the alignment workbench with six lanes of
 * 60-minute clips. Builds a database of its own (data/bench-workbench/), gives six clips
 * synthetic one-hour waveform peaks in the server's own format, starts the built app
 * (run `npx vite build` first), opens the workbench in Chromium and times, with
 * performance.now() in the page, from the key press to the end of the next painted frame.
 * Writes bench/WORKBENCH.md.
 *
 *   npx tsx bench/nudge-redraw.ts
 */
import { spawn, spawnSync } from 'node:child_process';
import { mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { chromium, type Page } from '@playwright/test';
import Database from 'better-sqlite3';
import { coarsenPeaks, PEAK_BUCKET_SIZES } from '../src/lib/sync/peaks';

const PORT = Number(process.env.BENCH_PORT ?? 4373);
const ROOT = resolve('data/bench-workbench');
const SAMPLE_RATE = 48000;
const CLIP_SECONDS = 3600;
const LANES = 6;
const NUDGES = 60;
const env = {
	...process.env,
	PORT: String(PORT),
	HOST: '127.0.0.1',
	ORIGIN: `http://127.0.0.1:${PORT}`,
	DATABASE_URL: join(ROOT, 'lockstep.db'),
	MEDIA_ROOT: join(ROOT, 'media'),
	LOCAL_SMTP_PORT: '2828',
	INSECURE_COOKIES: '1',
	SEED_DEMO_SESSION: '0'
};

/** One hour of peaks at every level: a noise floor with a clap-like burst every few seconds. */
function writeHourOfPeaks(dir: string): void {
	mkdirSync(dir, { recursive: true });
	const buckets = Math.ceil((CLIP_SECONDS * SAMPLE_RATE) / PEAK_BUCKET_SIZES[0]);
	let data: Float32Array<ArrayBufferLike> = new Float32Array(buckets * 2);
	let seed = 12345;
	const random = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
	for (let b = 0; b < buckets; b++) {
		const t = (b * PEAK_BUCKET_SIZES[0]) / SAMPLE_RATE;
		const burst = Math.exp(-((t % 3.7) / 0.08)) * 0.8;
		const level = 0.05 + 0.04 * Math.sin(t / 9) ** 2 + burst;
		data[2 * b] = -level * (0.5 + random() / 2);
		data[2 * b + 1] = level * (0.5 + random() / 2);
	}
	const levels = [];
	for (let i = 0; i < PEAK_BUCKET_SIZES.length; i++) {
		if (i > 0) data = coarsenPeaks(data, PEAK_BUCKET_SIZES[i] / PEAK_BUCKET_SIZES[i - 1]);
		const file = `peaks-${PEAK_BUCKET_SIZES[i]}.f32`;
		writeFileSync(join(dir, file), Buffer.from(data.buffer, data.byteOffset, data.byteLength));
		levels.push({ bucketSize: PEAK_BUCKET_SIZES[i], bucketCount: data.length / 2, file });
	}
	writeFileSync(join(dir, 'peaks.json'), JSON.stringify({ sampleRate: SAMPLE_RATE, levels }));
}

function seedBenchSession(): string {
	const db = new Database(env.DATABASE_URL);
	const workspace = db.prepare(`select id from workspaces where name = 'Fieldglass Capture Studio'`).get() as { id: string };
	const editor = db.prepare(`select id from users where email = 'eli.editor@lockstep.test'`).get() as { id: string };
	const sessionId = 'bench-six-hours';
	const peaksDir = join(ROOT, 'media', 'peaks-hour');
	writeHourOfPeaks(peaksDir);
	const positions = ['high', 'mid', 'low', 'high', 'mid', 'low'];
	const rates: [number, number][] = [[60000, 1001], [50, 1], [30, 1], [30000, 1001], [25, 1], [60, 1]];
	db.prepare(
		`insert into capture_sessions (id, workspace_id, name, status, reference_clip_id, usable_start_seconds, usable_end_seconds, version, created_by)
		 values (?, ?, 'Benchmark: six one-hour lanes', 'aligned', 'bench-clip-0', 20, 3590, 1, ?)`
	).run(sessionId, workspace.id, editor.id);
	const insert = db.prepare(
		`insert into clips (id, workspace_id, session_id, camera_label, camera_position, original_name, storage_path, storage_kind, size_bytes, sha256, state,
		  duration_seconds, frame_rate_num, frame_rate_den, sample_rate, channels, audio_codec, peaks_path, offset_seconds, drift_ppm, confidence, matched, sync_method)
		 values (?, ?, ?, ?, ?, ?, '/dev/null', 'referenced', 0, ?, 'ready', ?, ?, ?, ?, 1, 'aac', ?, ?, ?, 0.9, 1, 'audio')`
	);
	for (let i = 0; i < LANES; i++) {
		insert.run(
			`bench-clip-${i}`, workspace.id, sessionId, `Camera ${i + 1}`, positions[i], `hour-${i + 1}.mp4`, `bench-sha-${i}`,
			CLIP_SECONDS, rates[i][0], rates[i][1], SAMPLE_RATE, peaksDir, i === 0 ? 0 : i * 1.7, i === 0 ? 0 : (i % 2 ? -1 : 1) * 12 * i
		);
	}
	db.close();
	return sessionId;
}

async function waitForServer(): Promise<void> {
	for (let i = 0; i < 120; i++) {
		const ok = await fetch(`http://127.0.0.1:${PORT}/login`).then((r) => r.ok, () => false);
		if (ok) return;
		await new Promise((r) => setTimeout(r, 500));
	}
	throw new Error('the app did not start');
}

/** Key press → Svelte update → style, layout, paint of the next frame; timed inside the page. */
async function timeNudges(page: Page, key: string, count: number): Promise<number[]> {
	return page.evaluate(
		async ({ key, count }) => {
			const times: number[] = [];
			for (let i = 0; i < count; i++) {
				const t0 = performance.now();
				window.dispatchEvent(new KeyboardEvent('keydown', { key, bubbles: true }));
				await new Promise<void>((done) => requestAnimationFrame(() => setTimeout(done, 0)));
				times.push(performance.now() - t0);
				await new Promise((r) => setTimeout(r, 30));
			}
			return times;
		},
		{ key, count }
	);
}

const stats = (xs: number[]) => {
	const s = [...xs].sort((a, b) => a - b);
	const at = (q: number) => s[Math.min(s.length - 1, Math.floor(q * s.length))];
	return { median: at(0.5), p95: at(0.95), max: s[s.length - 1] };
};

rmSync(ROOT, { recursive: true, force: true });
mkdirSync(ROOT, { recursive: true });
for (const script of ['scripts/migrate.ts', 'scripts/seed.ts']) {
	const r = spawnSync('npx', ['tsx', script], { env, stdio: 'ignore' });
	if (r.status !== 0) throw new Error(`${script} failed`);
}
const sessionId = seedBenchSession();
console.log('starting the built app…');
const server = spawn('node', ['build'], { env, stdio: ['ignore', 'pipe', 'pipe'] });
server.stdout.on('data', (t: Buffer) => process.stderr.write(`[app] ${t}`));
server.stderr.on('data', (t: Buffer) => process.stderr.write(`[app] ${t}`));
try {
	await waitForServer();
	console.log('measuring…');
	const browser = await chromium.launch({
		executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
		args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run']
	});
	const page = await browser.newPage({ viewport: { width: 1600, height: 1000 } });
	await page.goto(`http://127.0.0.1:${PORT}/login`);
	await page.getByLabel('E-mail').fill('eli.editor@lockstep.test');
	await page.getByLabel('Password').fill('demo-editor-2026');
	await page.getByRole('button', { name: 'Sign in' }).click();
	await page.waitForURL(/\/sessions$/);
	await page.goto(`http://127.0.0.1:${PORT}/sessions/${sessionId}/align`);
	await page.getByTestId('lane').nth(LANES - 1).waitFor();
	await page.waitForLoadState('networkidle');
	await page.waitForTimeout(1000);

	const results: { view: string; key: string; times: number[] }[] = [];
	results.push({ view: 'whole session (about 1 hour across the view)', key: 'ArrowRight', times: await timeNudges(page, 'ArrowRight', NUDGES) });
	results.push({ view: 'whole session', key: ']', times: await timeNudges(page, ']', NUDGES) });
	await page.getByTestId('ruler').click({ position: { x: 700, y: 10 } });
	for (let i = 0; i < 8; i++) await page.keyboard.press('+');
	await page.waitForLoadState('networkidle');
	await page.waitForTimeout(1000);
	const scale = await page.getByTestId('zoom-scale').textContent();
	results.push({ view: `zoomed in 256× (${scale})`, key: '.', times: await timeNudges(page, '.', NUDGES) });
	await page.keyboard.press('Shift+ArrowRight');
	await page.waitForTimeout(800);
	const saved = await page.getByTestId('save-state').textContent();
	await browser.close();

	const cpu = spawnSync('sh', ['-c', "grep -m1 'model name' /proc/cpuinfo | cut -d: -f2; nproc; cut -d' ' -f1-3 /proc/loadavg"], { encoding: 'utf8' }).stdout.trim().split('\n');
	const rows = results.map((r) => {
		const s = stats(r.times);
		return `| ${r.view} | \`${r.key}\` | ${r.times.length} | ${s.median.toFixed(1)} | ${s.p95.toFixed(1)} | ${s.max.toFixed(1)} |`;
	});
	const report = `# Workbench nudge redraw

\`npx vite build && npx tsx bench/nudge-redraw.ts\` — six lanes of 60-minute clips (48 kHz, synthetic
one-hour peaks in the server's own format, all four levels), the built app, Debian's Chromium
headless (\`--disable-gpu\`, software compositing), viewport 1600×1000.

Each figure is one nudge, timed in the page with \`performance.now()\`: from dispatching the
key press, through the Svelte update of the lane and the browser's style, layout and paint,
to the task after the next animation frame. Saving to the server happens after the keys rest
and is not part of the redraw (the last save here: "${saved}").

| view | key | nudges | median ms | p95 ms | max ms |
|---|---|---|---|---|---|
${rows.join('\n')}

Target: under 50 ms. Measured ${new Date().toISOString().slice(0, 10)} on ${cpu[0]?.trim()} (${cpu[1]} cores, load average ${cpu[2]} while
other work shared the machine).

Why it is cheap: a lane's waveform is a WaveSurfer instance holding only the peaks of the
clip time in and around the view; a nudge changes one CSS transform of that lane. New peaks
are fetched (about one min/max pair per pixel, at the finest level 64 samples a pair) only
when the view leaves what was loaded or the zoom changes by more than a quarter.
`;
	writeFileSync('bench/WORKBENCH.md', report);
	console.log(report);
} finally {
	// The app finishes its jobs and mail on SIGTERM and may linger; the benchmark's own copy can just stop.
	server.kill('SIGKILL');
}
process.exit(0);
