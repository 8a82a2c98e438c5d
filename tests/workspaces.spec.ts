import { expect, test } from '@playwright/test';
import { apiAs, e2eDatabase, signInAs } from './helpers';

test.describe('workspaces keep their data apart', () => {
	let studioSession = '';
	// Unique per run: Playwright re-runs beforeAll after a failure, on the same database.
	const studioName = `Studio-only statue lap ${Date.now().toString(36)}`;

	test.beforeAll(async ({ baseURL }) => {
		const editor = await apiAs(baseURL, 'editor');
		const created = await editor.post('/api/sessions', { data: { name: studioName, site: 'Back lot' } });
		expect(created.status()).toBe(201);
		studioSession = (await created.json()).session.id;
		await editor.dispose();
	});

	test('a member of another workspace neither lists, opens nor changes a studio session', async ({ page }) => {
		await signInAs(page, 'outsider');
		await expect(page.getByRole('link', { name: 'Breakwater lamp, low tide' })).toBeVisible();
		await expect(page.getByText(studioName)).toHaveCount(0);

		const pageResponse = await page.goto(`/sessions/${studioSession}`);
		expect(pageResponse?.status()).toBe(404);
		await expect(page.getByRole('heading', { name: 'No such capture session in this workspace.' })).toBeVisible();

		const api = page.request;
		const read = await api.get(`/api/sessions/${studioSession}`);
		expect(read.status()).toBe(404);
		expect(await read.json()).toEqual({ error: { code: 'not_found', message: 'No such capture session in this workspace.' } });
		const change = await api.patch(`/api/sessions/${studioSession}`, { data: { version: 1, name: 'Taken over' } });
		expect(change.status()).toBe(404);
		const list = (await (await api.get('/api/sessions')).json()) as { sessions: { id: string; name: string }[] };
		expect(list.sessions.map((s) => s.name)).toContain('Breakwater lamp, low tide');
		// Every session listed belongs to the outsider's own workspace (other tests may add some there).
		const db = e2eDatabase();
		const workspaces = list.sessions.map(
			(s) => (db.prepare('select w.slug from capture_sessions c join workspaces w on w.id = c.workspace_id where c.id = ?').get(s.id) as { slug: string }).slug
		);
		db.close();
		expect(new Set(workspaces)).toEqual(new Set(['tidewater']));
	});

	test('a person in two workspaces switches between them and sees each one only', async ({ page }) => {
		await signInAs(page, 'editor');
		await expect(page.getByRole('link', { name: studioName })).toBeVisible();
		await page.getByLabel('Workspace').selectOption({ label: 'Tidewater Survey Unit · Reviewer' });
		await expect(page.getByRole('link', { name: 'Breakwater lamp, low tide' })).toBeVisible();
		await expect(page.getByText(studioName)).toHaveCount(0);
		await expect(page.getByTestId('current-role')).toHaveText('Reviewer');
		// As a reviewer there, the editor cannot create sessions in that workspace.
		const create = await page.request.post('/api/sessions', { data: { name: 'Should not exist' } });
		expect(create.status()).toBe(403);
		expect((await create.json()).error.code).toBe('forbidden');
		await page.getByLabel('Workspace').selectOption({ label: 'Fieldglass Capture Studio · Editor' });
		await expect(page.getByRole('link', { name: studioName })).toBeVisible();
	});

	test('switching to a workspace one does not belong to is refused', async ({ page }) => {
		await signInAs(page, 'reviewer');
		const response = await page.request.post('/workspace', {
			form: { workspaceId: 'not-a-real-workspace' },
			headers: { origin: new URL(page.url()).origin, accept: 'text/html' },
			maxRedirects: 0
		});
		expect(response.status()).toBe(403);
	});
});
