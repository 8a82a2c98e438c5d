import { expect, test, type Browser, type Page } from '@playwright/test';
import { copyFileSync, existsSync, mkdirSync, mkdtempSync, readFileSync, realpathSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { PEOPLE, e2eDatabase, signInAs, signInWith, type DemoRole } from './helpers';
import { sha256 } from './tus';

/*
 * Import from server folders. An admin names two roots outside Lockstep's data (one
 * referenced in place, one copied in); an editor browses and imports. Whatever a path
 * says, nothing outside a root is reachable.
 */

const HIGH = 'fixtures/upload/cam-high-5994.mp4';
const LOW = 'fixtures/upload/cam-low-25.mp4';

let scratch = '';
let referenceRoot = '';
let copyRoot = '';
const roots = { reference: '', copy: '' };

async function signedIn(browser: Browser, role: DemoRole): Promise<Page> {
	const page = await (await browser.newContext()).newPage();
	if (role === 'outsider') {
		await signInWith(page, PEOPLE.outsider.email, PEOPLE.outsider.password);
		await expect(page).toHaveURL(/\/sessions$/);
	} else await signInAs(page, role);
	return page;
}

async function newSession(page: Page, name: string): Promise<string> {
	const created = await page.request.post('/api/sessions', { data: { name: `${name} ${Date.now().toString(36)}`, site: 'Import bench' } });
	expect(created.status()).toBe(201);
	return (await created.json()).session.id;
}

function storageOf(clipId: string): { kind: string; path: string } {
	const db = e2eDatabase();
	try {
		return db.prepare('select storage_kind as kind, storage_path as path from clips where id = ?').get(clipId) as { kind: string; path: string };
	} finally {
		db.close();
	}
}

test.beforeAll(async ({ browser }) => {
	scratch = realpathSync(mkdtempSync(join(tmpdir(), 'lockstep-imports-')));
	referenceRoot = join(scratch, 'nas');
	copyRoot = join(scratch, 'cards');
	const outside = join(scratch, 'elsewhere');
	for (const dir of [join(referenceRoot, 'day1'), join(referenceRoot, 'bad'), join(copyRoot, 'card-A'), outside]) mkdirSync(dir, { recursive: true });
	copyFileSync(HIGH, join(referenceRoot, 'day1', 'cam-high-5994.mp4'));
	copyFileSync(LOW, join(referenceRoot, 'day1', 'cam-low-25.mp4'));
	writeFileSync(join(referenceRoot, 'day1', 'shot-list.txt'), 'lap 1, lap 2\n');
	copyFileSync(HIGH, join(referenceRoot, 'day1', '.hidden.mp4'));
	copyFileSync('fixtures/bad/notes.mp4', join(referenceRoot, 'bad', 'notes.mp4'));
	copyFileSync('fixtures/bad/truncated.mp4', join(referenceRoot, 'bad', 'truncated.mp4'));
	copyFileSync(LOW, join(copyRoot, 'card-A', 'cam-low-25.mp4'));
	copyFileSync(HIGH, join(outside, 'secret.mp4'));
	symlinkSync(outside, join(referenceRoot, 'elsewhere-link'));
	symlinkSync(join(outside, 'secret.mp4'), join(referenceRoot, 'linked-out.mp4'));
	symlinkSync(join(referenceRoot, 'day1', 'cam-low-25.mp4'), join(referenceRoot, 'linked-in.mp4'));

	const admin = await signedIn(browser, 'admin');
	for (const [mode, path, name] of [
		['reference', referenceRoot, `Studio NAS ${Date.now().toString(36)}`],
		['copy', copyRoot, `Camera cards ${Date.now().toString(36)}`]
	] as const) {
		const created = await admin.request.post('/api/admin/imports', { data: { name, path, mode } });
		expect(created.status(), await created.text()).toBe(201);
		roots[mode] = (await created.json()).root.id;
	}
	await admin.context().close();
});

test.afterAll(async () => {
	// Referenced clips are read in place by their jobs: let those finish before the folders go.
	const db = e2eDatabase();
	try {
		const busy = db.prepare("select count(*) as n from analysis_jobs where session_id in (select session_id from clips where storage_path like ?) and state in ('queued', 'running')");
		await expect.poll(() => (busy.get(`${scratch}/%`) as { n: number }).n, { timeout: 60_000 }).toBe(0);
	} finally {
		db.close();
	}
	if (scratch) rmSync(scratch, { recursive: true, force: true });
});

test('an editor browses an import folder in the page and imports a clip by reference', async ({ page }) => {
	await signInAs(page, 'editor');
	const sessionId = await newSession(page, 'Referenced');
	await page.goto(`/sessions/${sessionId}`);

	const rootList = await (await page.request.get('/api/import-roots')).json();
	const root = rootList.roots.find((r: { id: string }) => r.id === roots.reference);
	expect(root).toEqual({ id: roots.reference, name: expect.any(String), mode: 'reference' });
	expect(JSON.stringify(rootList)).not.toContain(scratch);

	await page.getByLabel('Import folder').selectOption(roots.reference);
	const section = page.getByRole('region', { name: 'Import from a server folder' });
	await expect(section.getByRole('button', { name: 'Open folder day1' })).toBeVisible();
	await expect(section.getByRole('checkbox', { name: 'linked-in.mp4' })).toBeVisible();
	// Links that lead outside the folder are not shown at all.
	await expect(section).not.toContainText('elsewhere-link');
	await expect(section).not.toContainText('linked-out.mp4');

	await section.getByRole('button', { name: 'Open folder day1' }).click();
	await expect(section.getByRole('checkbox', { name: 'cam-high-5994.mp4' })).toBeVisible();
	await expect(section.getByRole('checkbox', { name: 'cam-low-25.mp4' })).toBeVisible();
	await expect(section).not.toContainText('shot-list.txt');
	await expect(section).not.toContainText('.hidden.mp4');

	await section.getByRole('checkbox', { name: 'cam-high-5994.mp4' }).check();
	await section.getByRole('button', { name: 'Import 1 file' }).click();
	const results = section.getByRole('list', { name: 'Import results' });
	await expect(results.getByRole('listitem').filter({ hasText: 'day1/cam-high-5994.mp4' })).toContainText('Added');

	const { clips } = await (await page.request.get(`/api/sessions/${sessionId}`)).json();
	expect(clips).toHaveLength(1);
	expect(clips[0]).toMatchObject({ originalName: 'cam-high-5994.mp4', sha256: sha256(readFileSync(HIGH)) });
	// Referenced in place: the clip points at the file inside the root, which stays where it is.
	expect(storageOf(clips[0].id)).toEqual({ kind: 'referenced', path: join(referenceRoot, 'day1', 'cam-high-5994.mp4') });
	await expect(page.getByTestId('clip-row').filter({ hasText: 'cam-high-5994.mp4' })).toBeVisible();
});

test('a copy root copies the original into the media store and leaves the source as it was', async ({ page }) => {
	await signInAs(page, 'editor');
	const sessionId = await newSession(page, 'Copied');
	const source = join(copyRoot, 'card-A', 'cam-low-25.mp4');

	const first = await page.request.post(`/api/sessions/${sessionId}/imports`, { data: { rootId: roots.copy, files: ['card-A/cam-low-25.mp4'], cameraPosition: 'low' } });
	expect(first.status()).toBe(200);
	const [added] = (await first.json()).results;
	expect(added).toMatchObject({ path: 'card-A/cam-low-25.mp4', kind: 'added', clip: { storedAs: 'stored', cameraPosition: 'low' } });
	const stored = storageOf(added.clip.id);
	expect(stored.kind).toBe('stored');
	expect(stored.path).toContain('data/e2e/media/originals/');
	expect(readFileSync(stored.path).equals(readFileSync(LOW))).toBe(true);
	expect(existsSync(source) && sha256(readFileSync(source))).toBe(sha256(readFileSync(LOW)));

	const again = await page.request.post(`/api/sessions/${sessionId}/imports`, { data: { rootId: roots.copy, files: ['card-A/cam-low-25.mp4'] } });
	expect((await again.json()).results[0]).toMatchObject({ kind: 'duplicate', clip: { id: added.clip.id } });
});

test('paths that lead out of a root are refused with a clear reason', async ({ page }) => {
	await signInAs(page, 'editor');
	const browse = (query: string) => page.request.get(`/api/import-roots/${roots.reference}/browse?path=${query}`);
	const refusals: [string, number, RegExp][] = [
		['..', 400, /may not contain "\.\."/],
		['day1/../..', 400, /may not contain "\.\."/],
		['%2e%2e%2f%2e%2e%2fetc', 400, /may not contain "\.\."/],
		['%252e%252e%252fetc', 400, /URL-encoded characters/],
		['day1%252f..%252f..', 400, /URL-encoded characters/],
		['%2Fetc', 400, /not as an absolute server path/],
		['/etc', 400, /not as an absolute server path/],
		['day1%00', 400, /NUL byte/],
		['..%5C..%5Cetc', 400, /Use "\/" between folder names|may not contain/],
		['elsewhere-link', 403, /leads outside .* \(through a link\)/],
		['no-such-folder', 404, /There is no folder "no-such-folder"/]
	];
	for (const [query, status, message] of refusals) {
		const response = await browse(query);
		expect(response.status(), query).toBe(status);
		expect((await response.json()).error.message, query).toMatch(message);
	}
	expect((await browse('day1')).status()).toBe(200);

	const sessionId = await newSession(page, 'Escapes');
	const imported = await page.request.post(`/api/sessions/${sessionId}/imports`, {
		data: {
			rootId: roots.reference,
			files: ['../cards/card-A/cam-low-25.mp4', '/etc/passwd', 'linked-out.mp4', 'elsewhere-link/secret.mp4', 'day1%2F..%2F..%2Fcards', 'bad/notes.mp4', 'bad/truncated.mp4', 'day1/cam-low-25.mp4']
		}
	});
	expect(imported.status()).toBe(200);
	const results: { path: string; kind: string; code?: string; message?: string }[] = (await imported.json()).results;
	const byPath = Object.fromEntries(results.map((r) => [r.path, r]));
	expect(byPath['../cards/card-A/cam-low-25.mp4']).toMatchObject({ kind: 'refused', code: 'path_escape' });
	expect(byPath['/etc/passwd']).toMatchObject({ kind: 'refused', code: 'absolute_path' });
	expect(byPath['linked-out.mp4']).toMatchObject({ kind: 'refused', code: 'outside_root' });
	expect(byPath['elsewhere-link/secret.mp4']).toMatchObject({ kind: 'refused', code: 'outside_root' });
	expect(byPath['day1%2F..%2F..%2Fcards']).toMatchObject({ kind: 'refused', code: 'encoded_path' });
	expect(byPath['bad/notes.mp4']).toMatchObject({ kind: 'refused', code: 'not_media' });
	expect(byPath['bad/truncated.mp4']).toMatchObject({ kind: 'refused', code: 'truncated' });
	// One good file among the bad ones still comes in, and only it.
	expect(byPath['day1/cam-low-25.mp4']).toMatchObject({ kind: 'added' });
	const { clips } = await (await page.request.get(`/api/sessions/${sessionId}`)).json();
	expect(clips.map((c: { originalName: string }) => c.originalName)).toEqual(['cam-low-25.mp4']);
});

test('only editors import; reviewers and processors cannot browse; other workspaces see nothing', async ({ browser }) => {
	const editor = await signedIn(browser, 'editor');
	const sessionId = await newSession(editor, 'Guarded imports');
	const body = { rootId: roots.reference, files: ['day1/cam-low-25.mp4'] };

	for (const role of ['reviewer', 'processor'] as const) {
		const page = await signedIn(browser, role);
		expect((await page.request.get('/api/import-roots')).status(), role).toBe(403);
		expect((await page.request.get(`/api/import-roots/${roots.reference}/browse?path=day1`)).status(), role).toBe(403);
		expect((await page.request.post(`/api/sessions/${sessionId}/imports`, { data: body })).status(), role).toBe(403);
		await page.context().close();
	}

	// Admins manage and browse the folders but do not bring clips into sessions.
	const admin = await signedIn(browser, 'admin');
	expect((await admin.request.get(`/api/import-roots/${roots.reference}/browse?path=day1`)).status()).toBe(200);
	expect((await admin.request.post(`/api/sessions/${sessionId}/imports`, { data: body })).status()).toBe(403);
	await admin.context().close();

	const outsider = await signedIn(browser, 'outsider');
	const theirRoots = await (await outsider.request.get('/api/import-roots')).json();
	expect(theirRoots.roots.map((r: { id: string }) => r.id)).not.toContain(roots.reference);
	expect((await outsider.request.get(`/api/import-roots/${roots.reference}/browse`)).status()).toBe(404);
	expect((await outsider.request.post(`/api/sessions/${sessionId}/imports`, { data: body })).status()).toBe(404);
	const ownSession = await newSession(outsider, 'Tidewater');
	const crossRoot = await outsider.request.post(`/api/sessions/${ownSession}/imports`, { data: body });
	expect(crossRoot.status()).toBe(404);
	expect((await crossRoot.json()).error.message).toMatch(/No such import folder in this workspace/);
	await outsider.context().close();

	expect((await (await editor.request.get(`/api/sessions/${sessionId}`)).json()).clips).toEqual([]);
	await editor.context().close();
});
