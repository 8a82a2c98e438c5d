import { readFileSync } from 'node:fs';
import { expect, test } from '@playwright/test';
import { signInAs } from './helpers';

interface TruthClip {
	file: string;
	offsetSeconds: number;
	driftPpm: number;
}
// Known truth of the generated fixture (fixtures/README.md): offsets relative to high.mp4.
const truth = JSON.parse(readFileSync('fixtures/fountain-lap/truth.json', 'utf8')) as { clips: TruthClip[] };

test('an editor creates a session, uploads three clips, watches the jobs and sees rates and the alignment', async ({ page }) => {
	test.setTimeout(180_000);
	await signInAs(page, 'editor');
	await page.getByRole('link', { name: 'New capture session' }).click();
	await expect(page.getByRole('heading', { name: 'New capture session' })).toBeVisible();
	const name = `Fountain upload ${Date.now().toString(36)}`;
	await page.getByLabel('Name', { exact: true }).fill(name);
	await page.getByLabel('Site', { exact: true }).fill('Market Square, Wrenfield');
	await page.getByRole('button', { name: 'Create capture session' }).click();
	await expect(page.getByRole('heading', { name })).toBeVisible();
	const sessionId = page.url().split('/').pop()!;

	await page.locator('input[type=file]').setInputFiles(truth.clips.map((c) => `fixtures/fountain-lap/${c.file}`));
	const uploads = page.getByRole('list', { name: 'Uploads' });
	for (const clip of truth.clips) await expect(uploads.getByRole('progressbar', { name: clip.file })).toBeVisible();

	// Probing, then alignment, which starts by itself once every clip is probed.
	await expect(page.getByRole('progressbar', { name: 'Align by sound progress' })).toBeVisible({ timeout: 90_000 });
	await expect(page.getByTestId('job').filter({ hasText: 'Aligned: 3 of 3 clips matched' })).toBeVisible({ timeout: 120_000 });

	const rows = page.getByTestId('clip-row');
	await expect(rows).toHaveCount(3);
	// ffprobe's rational rates, shown the way the trade writes them: 60000/1001 as 59.94.
	const rates = (await page.getByTestId('frame-rate').allTextContents()).sort();
	expect(rates).toEqual(['30', '50', '59.94']);

	const stored = await (await page.request.get(`/api/sessions/${sessionId}`)).json();
	const byName = new Map<string, { offsetSeconds: number; driftPpm: number; matched: boolean; id: string }>(
		stored.clips.map((c: { originalName: string }) => [c.originalName, c])
	);
	const reference = byName.get('high.mp4')!;
	expect(stored.session.referenceClipId).toBe(reference.id);
	expect(stored.session.status).toBe('aligned');
	for (const clip of truth.clips) {
		const got = byName.get(clip.file)!;
		expect(got.matched).toBe(true);
		// Issue 3's accuracy target: within 0.5 ms of the generator's truth.
		expect(Math.abs(got.offsetSeconds - clip.offsetSeconds) * 1000).toBeLessThan(0.5);
	}
});
