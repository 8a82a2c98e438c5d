import { expect, test, type Page } from '@playwright/test';
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdirSync, readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { PEOPLE, e2eDatabase, signInAs } from './helpers';
import { TUS, cookieHeader, cutPatch, sha256, tusCreate, tusHead, tusPatch, tusUpload } from './tus';

/*
 * Uploads over tus: through the session page (progress per file, outcome per file), and by
 * hand where a test needs to cut a connection midway. The e2e server sends 64 KB chunks
 * (UPLOAD_CHUNK_BYTES in playwright.config.ts), so each fixture takes several PATCHes.
 */

const HIGH = 'fixtures/upload/cam-high-5994.mp4';
const LOW = 'fixtures/upload/cam-low-25.mp4';

interface ApiClip {
	id: string;
	workspaceId: string;
	originalName: string;
	sha256: string;
	sizeBytes: number;
	frameRateNum: number | null;
	frameRateDen: number | null;
	storedAs: string;
}

async function newSession(page: Page, name: string): Promise<string> {
	const created = await page.request.post('/api/sessions', { data: { name: `${name} ${Date.now().toString(36)}`, site: 'Upload bench' } });
	expect(created.status()).toBe(201);
	return (await created.json()).session.id;
}

async function clipsOf(page: Page, sessionId: string): Promise<ApiClip[]> {
	const response = await page.request.get(`/api/sessions/${sessionId}`);
	expect(response.status()).toBe(200);
	return (await response.json()).clips;
}

function storedOriginal(clip: ApiClip): Buffer {
	return readFileSync(join('data/e2e/media/originals', clip.workspaceId, clip.sha256, clip.originalName));
}

test('an editor uploads two clips through the page, with a progress bar and an outcome for each', async ({ page }) => {
	await signInAs(page, 'editor');
	const sessionId = await newSession(page, 'Two cameras');
	await page.goto(`/sessions/${sessionId}`);

	await page.getByLabel('Choose clips').setInputFiles([HIGH, LOW]);
	const uploads = page.getByRole('list', { name: 'Uploads' });
	for (const file of ['cam-high-5994.mp4', 'cam-low-25.mp4']) {
		const bar = uploads.getByRole('progressbar', { name: file });
		await expect(bar).toBeVisible();
		await expect(bar).toHaveAttribute('aria-valuenow', '100', { timeout: 30_000 });
		await expect(uploads.getByRole('listitem').filter({ hasText: file })).toContainText('Added');
	}

	const clips = await clipsOf(page, sessionId);
	expect(clips.map((c) => c.originalName).sort()).toEqual(['cam-high-5994.mp4', 'cam-low-25.mp4']);
	const high = clips.find((c) => c.originalName === 'cam-high-5994.mp4')!;
	expect(high.sha256).toBe(sha256(readFileSync(HIGH)));
	expect(storedOriginal(high).equals(readFileSync(HIGH))).toBe(true);
	// The rate as a rational straight from the stream (ffprobe r_frame_rate), never a rounded float.
	expect([high.frameRateNum, high.frameRateDen]).toEqual([60000, 1001]);
	const rows = page.getByTestId('clip-row');
	await expect(rows.filter({ hasText: 'cam-high-5994.mp4' })).toBeVisible();
	await expect(rows.filter({ hasText: 'cam-low-25.mp4' })).toBeVisible();

	// The same file again is recognised and not stored twice.
	await page.getByLabel('Choose clips').setInputFiles([HIGH]);
	await expect(uploads.getByRole('listitem').filter({ hasText: 'cam-high-5994.mp4' }).last()).toContainText('Already in this session', { timeout: 30_000 });
	expect(await clipsOf(page, sessionId)).toHaveLength(2);
});

test('an upload cut midway resumes from what the server holds and ends byte-identical', async ({ page, baseURL }) => {
	await signInAs(page, 'editor');
	const sessionId = await newSession(page, 'Cut connection');
	const bytes = readFileSync(LOW);

	const created = await tusCreate(page.request, bytes.length, { sessionId, filename: 'cam-low-25.mp4' });
	expect(created.status()).toBe(201);
	const location = created.headers()['location'];
	await cutPatch(baseURL!, await cookieHeader(page), location, bytes, Math.floor(bytes.length * 0.6));

	const head = await tusHead(page.request, location);
	expect(head.status()).toBe(200);
	const offset = Number(head.headers()['upload-offset']);
	expect(offset).toBeGreaterThan(0);
	expect(offset).toBeLessThan(bytes.length);
	expect(Number(head.headers()['upload-length'])).toBe(bytes.length);

	const rest = await tusPatch(page.request, location, offset, bytes.subarray(offset));
	expect(rest.status()).toBe(200);
	const { outcome } = await rest.json();
	expect(outcome.kind).toBe('added');
	expect(outcome.clip.sha256).toBe(sha256(bytes));

	const [clip] = await clipsOf(page, sessionId);
	expect(storedOriginal(clip).equals(bytes)).toBe(true);

	// A client that lost the last answer learns the outcome from a HEAD.
	const again = await tusHead(page.request, location);
	expect(again.status()).toBe(200);
	expect(again.headers()['upload-offset']).toBe(String(bytes.length));
	const told = JSON.parse(Buffer.from(again.headers()['lockstep-outcome'], 'base64url').toString('utf8'));
	expect(told).toMatchObject({ kind: 'added', clip: { id: clip.id } });
});

test('the page retries a dropped chunk and finishes the file intact', async ({ page }) => {
	await signInAs(page, 'editor');
	const sessionId = await newSession(page, 'Dropped chunk');
	let patches = 0;
	let headsAfterDrop = 0;
	await page.route('**/api/uploads/*', async (route) => {
		const method = route.request().method();
		if (method === 'PATCH' && ++patches === 2) return route.abort('connectionreset');
		if (method === 'HEAD' && patches >= 2) headsAfterDrop++;
		return route.continue();
	});
	await page.goto(`/sessions/${sessionId}`);
	await page.getByLabel('Choose clips').setInputFiles([HIGH]);
	const item = page.getByRole('list', { name: 'Uploads' }).getByRole('listitem');
	await expect(item).toContainText('Added', { timeout: 30_000 });
	expect(patches).toBeGreaterThan(2);
	expect(headsAfterDrop).toBeGreaterThan(0);

	const [clip] = await clipsOf(page, sessionId);
	expect(clip.sha256).toBe(sha256(readFileSync(HIGH)));
	expect(storedOriginal(clip).equals(readFileSync(HIGH))).toBe(true);
});

test('a paused upload resumes where it stopped, without starting over', async ({ page }) => {
	await signInAs(page, 'editor');
	const sessionId = await newSession(page, 'Paused');
	const seen: { method: string; offset: string | null }[] = [];
	await page.route('**/api/uploads**', async (route) => {
		const request = route.request();
		if (request.method() === 'GET') return route.continue();
		seen.push({ method: request.method(), offset: request.headers()['upload-offset'] ?? null });
		// Slow chunks, so there is time to pause mid-file.
		if (request.method() === 'PATCH') await new Promise((r) => setTimeout(r, 600));
		await route.continue().catch(() => undefined);
	});
	await page.goto(`/sessions/${sessionId}`);
	await page.getByLabel('Choose clips').setInputFiles([LOW]);

	await expect.poll(() => seen.filter((s) => s.method === 'PATCH').length).toBeGreaterThanOrEqual(2);
	await page.getByRole('button', { name: 'Pause cam-low-25.mp4' }).click();
	const item = page.getByRole('list', { name: 'Uploads' }).getByRole('listitem');
	await expect(item).toContainText('Paused');
	const beforeResume = seen.length;

	await page.getByRole('button', { name: 'Resume cam-low-25.mp4' }).click();
	await expect(item).toContainText('Added', { timeout: 30_000 });

	const afterResume = seen.slice(beforeResume);
	expect(afterResume[0].method).toBe('HEAD');
	expect(seen.filter((s) => s.method === 'POST')).toHaveLength(1);
	const firstResumedPatch = afterResume.find((s) => s.method === 'PATCH')!;
	expect(Number(firstResumedPatch.offset)).toBeGreaterThan(0);

	const [clip] = await clipsOf(page, sessionId);
	expect(storedOriginal(clip).equals(readFileSync(LOW))).toBe(true);
});

test('an upload larger than the limit is refused before any byte is sent', async ({ page }) => {
	await signInAs(page, 'editor');
	const sessionId = await newSession(page, 'Too large');
	const created = await tusCreate(page.request, 70 * 1024 ** 3, { sessionId, filename: 'huge.mov' });
	expect(created.status()).toBe(413);
	expect((await created.json()).error.message).toMatch(/larger than this server accepts \(64 GB/);
});

test('uploads check the role, the workspace and the session on every request', async ({ page, browser }) => {
	await signInAs(page, 'editor');
	const sessionId = await newSession(page, 'Guarded');
	const bytes = readFileSync(LOW);
	const created = await tusCreate(page.request, bytes.length, { sessionId, filename: 'cam-low-25.mp4' });
	const location = created.headers()['location'];

	// Reviewers and processors may not create uploads, whatever they send.
	for (const role of ['reviewer', 'processor', 'admin'] as const) {
		const context = await browser.newContext();
		const other = await context.newPage();
		await signInAs(other, role);
		const refused = await tusCreate(other.request, bytes.length, { sessionId, filename: 'x.mp4' });
		expect(refused.status(), role).toBe(403);
		expect((await tusPatch(other.request, location, 0, bytes)).status(), role).toBe(403);
		await context.close();
	}

	// Another workspace's editor can neither see, resume nor write into this upload or session.
	const context = await browser.newContext();
	const outsider = await context.newPage();
	await outsider.goto('/login');
	await outsider.getByLabel('E-mail').fill(PEOPLE.outsider.email);
	await outsider.getByLabel('Password').fill(PEOPLE.outsider.password);
	await outsider.getByRole('button', { name: 'Sign in' }).click();
	await expect(outsider).toHaveURL(/\/sessions$/);
	expect((await tusHead(outsider.request, location)).status()).toBe(404);
	const patched = await tusPatch(outsider.request, location, 0, bytes);
	expect(patched.status()).toBe(404);
	expect((await patched.json()).error.message).toMatch(/No such upload in this workspace/);
	expect((await outsider.request.delete(location, { headers: TUS })).status()).toBe(404);
	const intoTheirs = await tusUpload(outsider.request, sessionId, 'x.mp4', bytes);
	expect(intoTheirs.status).toBe(404);
	await context.close();

	// The upload itself was untouched by all that.
	const head = await tusHead(page.request, location);
	expect(head.headers()['upload-offset']).toBe('0');
	expect(await clipsOf(page, sessionId)).toHaveLength(0);

	// Requests that are not tus are told so.
	const plain = await page.request.post('/api/uploads', { data: { sessionId } });
	expect(plain.status()).toBe(400);
	expect((await plain.json()).error.code).toBe('not_tus');
});

test('an upload resumes after the server restarts', async ({ baseURL }) => {
	test.setTimeout(120_000);
	// A second server of the same build, on a copy of the test database and its own media folder.
	const dir = 'data/e2e-upload-restart';
	rmSync(dir, { recursive: true, force: true });
	mkdirSync(dir, { recursive: true });
	const source = e2eDatabase();
	await source.backup(join(dir, 'lockstep.db'));
	source.close();
	// +27: 4173 + 17 would be 4190, a port the fetch standard blocks.
	const port = Number(new URL(baseURL!).port) + 27;
	const base = `http://127.0.0.1:${port}`;
	const env = {
		...process.env,
		PORT: String(port),
		HOST: '127.0.0.1',
		ORIGIN: base,
		DATABASE_URL: join(dir, 'lockstep.db'),
		MEDIA_ROOT: join(dir, 'media'),
		LOCAL_SMTP_PORT: String(port + 1),
		INSECURE_COOKIES: '1',
		BODY_SIZE_LIMIT: 'Infinity'
	};
	let server: ChildProcess | null = null;
	const start = async () => {
		server = spawn('node', ['build'], { env, stdio: 'ignore' });
		await expect.poll(() => fetch(`${base}/login`).then((r) => r.status, () => 0), { timeout: 30_000 }).toBe(200);
	};
	const stop = async () => {
		const running = server;
		if (!running || running.exitCode !== null) return;
		const exited = new Promise((resolve) => running.once('exit', resolve));
		running.kill('SIGKILL');
		await exited;
	};

	try {
		await start();
		const signIn = await fetch(`${base}/login`, {
			method: 'POST',
			redirect: 'manual',
			headers: { origin: base, accept: 'text/html', 'content-type': 'application/x-www-form-urlencoded' },
			body: new URLSearchParams({ email: PEOPLE.editor.email, password: PEOPLE.editor.password })
		});
		expect(signIn.status).toBe(303);
		const cookie = signIn.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ');
		const call = (path: string, init: RequestInit = {}) => fetch(`${base}${path}`, { ...init, headers: { cookie, ...TUS, ...init.headers } });

		const created = await call('/api/sessions', { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ name: 'Restart', site: 'Bench' }) });
		const sessionId = (await created.json()).session.id;
		const bytes = readFileSync(HIGH);
		const upload = await call('/api/uploads', {
			method: 'POST',
			headers: { 'upload-length': String(bytes.length), 'upload-metadata': `sessionId ${Buffer.from(sessionId).toString('base64')},filename ${Buffer.from('cam-high-5994.mp4').toString('base64')}` }
		});
		expect(upload.status).toBe(201);
		const location = upload.headers.get('location')!;
		await cutPatch(base, cookie, location, bytes, Math.floor(bytes.length / 2));

		// The server dies without warning and comes back.
		await stop();
		await start();

		const head = await call(location, { method: 'HEAD' });
		expect(head.status).toBe(200);
		const offset = Number(head.headers.get('upload-offset'));
		expect(offset).toBeGreaterThan(0);
		const rest = await call(location, {
			method: 'PATCH',
			headers: { 'upload-offset': String(offset), 'content-type': 'application/offset+octet-stream' },
			body: bytes.subarray(offset)
		});
		expect(rest.status).toBe(200);
		const { outcome } = await rest.json();
		expect(outcome).toMatchObject({ kind: 'added', clip: { sha256: sha256(bytes) } });
		const stored = readFileSync(join(dir, 'media/originals', outcome.clip.workspaceId, outcome.clip.sha256, 'cam-high-5994.mp4'));
		expect(stored.equals(bytes)).toBe(true);
	} finally {
		await stop();
		rmSync(dir, { recursive: true, force: true });
	}
});
