import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { mkdirSync, rmSync } from 'node:fs';
import { resolve } from 'node:path';
import { expect, test, type APIRequestContext } from '@playwright/test';
import Database from 'better-sqlite3';
import { apiAs } from './helpers';

/*
 * A server killed in the middle of an alignment and started again: the job runs again to the
 * end, and nothing it writes is duplicated. This file runs its own server and database.
 */
const PORT = 4273; // not on the fetch standard's list of blocked ports (4190 is)
const BASE = `http://127.0.0.1:${PORT}`;
const DIR = 'data/e2e-restart';
const env = {
	...process.env,
	PORT: String(PORT),
	HOST: '127.0.0.1',
	ORIGIN: BASE,
	DATABASE_URL: `${DIR}/lockstep.db`,
	MEDIA_ROOT: `${DIR}/media`,
	LOCAL_SMTP_PORT: '2727',
	INSECURE_COOKIES: '1',
	SEED_DEMO_SESSION: '0'
};

function startServer(): ChildProcess {
	return spawn('node', ['build'], { env, stdio: 'ignore' });
}

async function waitUntilUp(): Promise<void> {
	let last = '';
	for (let i = 0; i < 1000; i++) {
		try {
			const response = await fetch(`${BASE}/login`);
			if (response.ok) return;
			last = `status ${response.status}`;
		} catch (error) {
			last = String((error as { cause?: unknown }).cause ?? error);
		}
		await new Promise((r) => setTimeout(r, 150));
	}
	throw new Error(`The server did not come up (${last})`);
}

let server: ChildProcess | undefined;

test.afterAll(() => {
	server?.kill('SIGKILL');
});

test('a server killed during an alignment finishes the job after a restart, without duplicates', async () => {
	test.setTimeout(420_000);
	const stale = await fetch(`${BASE}/login`).then(() => true, () => false);
	expect(stale, `something already listens on port ${PORT}; stop it first`).toBe(false);
	rmSync(DIR, { recursive: true, force: true });
	mkdirSync(DIR, { recursive: true });
	for (const script of ['scripts/migrate.ts', 'scripts/seed.ts']) {
		expect(spawnSync('npx', ['tsx', script], { env, stdio: 'ignore' }).status).toBe(0);
	}
	server = startServer();
	await waitUntilUp();

	const admin = await apiAs(BASE, 'admin');
	const root = await admin.post('/api/admin/imports', { data: { name: 'Fountain card', path: resolve('fixtures/fountain-lap'), mode: 'reference' } });
	expect(root.status()).toBe(201);
	const rootId = (await root.json()).root.id as string;
	const editor = await apiAs(BASE, 'editor');
	const created = await editor.post('/api/sessions', { data: { name: 'Restart drill' } });
	const sessionId = (await created.json()).session.id as string;
	const imported = await editor.post(`/api/sessions/${sessionId}/imports`, { data: { rootId, files: ['high.mp4', 'mid.mp4', 'low.mp4'] } });
	expect(imported.ok()).toBe(true);

	// Wait for an alignment to be running, then kill the server without warning.
	type Job = { id: string; kind: string; state: string };
	const jobsNow = async (context: APIRequestContext): Promise<Job[]> => (await (await context.get(`/api/sessions/${sessionId}/jobs`)).json()).jobs;
	let interrupted = '';
	await expect
		.poll(async () => (interrupted = (await jobsNow(editor)).find((j) => j.kind === 'align' && j.state === 'running')?.id ?? ''), {
			timeout: 120_000,
			intervals: [100]
		})
		.not.toBe('');
	server.kill('SIGKILL');
	await new Promise((r) => server!.once('exit', r));
	await admin.dispose();
	await editor.dispose();

	server = startServer();
	await waitUntilUp();
	const again = await apiAs(BASE, 'editor');
	// Every job ends done; clips that finished probing after the first run get a second one.
	await expect
		.poll(async () => (await jobsNow(again)).filter((j) => j.state !== 'done').length, { timeout: 150_000, intervals: [500] })
		.toBe(0);
	await again.dispose();

	const db = new Database(`${DIR}/lockstep.db`, { readonly: true });
	const rerun = db.prepare('select attempts, state from analysis_jobs where id = ?').get(interrupted);
	expect(rerun).toEqual({ attempts: 2, state: 'done' });
	const count = (sql: string) => (db.prepare(sql).get(sessionId) as { n: number }).n;
	const alignRuns = count("select count(*) n from analysis_jobs where session_id = ? and kind = 'align'");
	// One revision, one activity entry and one version step per alignment run: none written twice.
	expect(count("select count(*) n from revisions where session_id = ? and kind = 'alignment'")).toBe(alignRuns);
	expect(count("select count(*) n from activity where session_id = ? and kind = 'aligned'")).toBe(alignRuns);
	expect(count('select version n from capture_sessions where id = ?')).toBe(1 + alignRuns);
	expect(count('select count(*) n from clips where session_id = ?')).toBe(3);
	expect(count('select count(*) n from clips where session_id = ? and matched = 1')).toBe(3);
	for (const kind of ['probe', 'peaks', 'proxy']) {
		expect(count(`select count(*) n from analysis_jobs where session_id = ? and kind = '${kind}'`), kind).toBe(3);
	}
	db.close();
});
