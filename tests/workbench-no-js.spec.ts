import { expect, test, type APIRequestContext } from '@playwright/test';
import { apiAs, signInAs } from './helpers';

/*
 * The workbench's typed changes as plain form posts, with JavaScript off in the browser:
 * an exact offset, a refused drift that saves nothing, a stale page meeting someone else's
 * change, and a revert. Each test puts the demo session's timing back as it found it.
 */

test.use({ javaScriptEnabled: false });

const DEMO = 'Market Square fountain, lap 2';

interface Stored {
	session: { id: string; version: number };
	clips: { id: string; cameraLabel: string; offsetSeconds: number; driftPpm: number }[];
	revisions: { id: string; sessionVersion: number; summary: string }[];
}

async function demo(request: APIRequestContext): Promise<Stored> {
	const list = (await (await request.get(`/api/sessions?q=${encodeURIComponent(DEMO)}`)).json()) as { sessions: { id: string; name: string }[] };
	const id = list.sessions.find((s) => s.name === DEMO)!.id;
	return (await (await request.get(`/api/sessions/${id}/alignment`)).json()) as Stored;
}

const mid = (s: Stored) => s.clips.find((c) => c.cameraLabel === 'Rig mid')!;

async function putBack(request: APIRequestContext, before: Stored) {
	const now = await demo(request);
	const clip = mid(now);
	if (clip.offsetSeconds === mid(before).offsetSeconds) return;
	const response = await request.post(`/api/sessions/${now.session.id}/alignment`, {
		data: { version: now.session.version, edit: { kind: 'offset', clipId: clip.id, offsetSeconds: mid(before).offsetSeconds, reason: 'test clean-up' } }
	});
	expect(response.status(), await response.text()).toBe(200);
}

test('an editor types an exact offset with JavaScript off and it is stored', async ({ page }) => {
	await signInAs(page, 'editor');
	const before = await demo(page.request);
	await page.goto(`/sessions/${before.session.id}/align`);
	// Choosing a lane is a plain GET (?clip=…) without JavaScript.
	await page.getByRole('button', { name: 'Work on Rig mid' }).click();
	await expect(page).toHaveURL(new RegExp(`\\?clip=${mid(before).id}$`));
	const wanted = 2.5125;
	await page.getByLabel('Offset (s)').fill(String(wanted));
	await page.getByLabel('Reason (optional)').fill('typed without JavaScript');
	await page.getByRole('button', { name: 'Set offset and drift' }).click();

	await expect(page.getByRole('status')).toContainText(`Saved (version ${before.session.version + 1}): changed the offset of Rig mid from +${mid(before).offsetSeconds.toFixed(6)} s to +2.512500 s.`);
	const after = await demo(page.request);
	expect(mid(after).offsetSeconds).toBe(wanted);
	expect(mid(after).driftPpm).toBe(mid(before).driftPpm);
	expect(after.session.version).toBe(before.session.version + 1);
	// The page after the post shows the stored value in the same lane's form.
	await expect(page.getByLabel('Offset (s)')).toHaveValue(String(wanted));
	await putBack(page.request, before);
});

test('a drift beyond ±5000 ppm is refused in words and the offset typed beside it is not saved either', async ({ page }) => {
	await signInAs(page, 'editor');
	const before = await demo(page.request);
	await page.goto(`/sessions/${before.session.id}/align?clip=${mid(before).id}`);
	await page.getByLabel('Offset (s)').fill('2.6');
	await page.getByLabel('Drift (ppm)').fill('9000');
	await page.getByRole('button', { name: 'Set offset and drift' }).click();
	await expect(page.getByRole('alert')).toHaveText('A drift beyond ±5000 ppm is not a clock error.');
	// What was typed is shown back, and nothing was stored.
	await expect(page.getByLabel('Drift (ppm)')).toHaveValue('9000');
	await expect(page.getByLabel('Offset (s)')).toHaveValue('2.6');
	const after = await demo(page.request);
	expect(mid(after).offsetSeconds).toBe(mid(before).offsetSeconds);
	expect(after.session.version).toBe(before.session.version);
});

test('a page left open while someone else changes the offset is refused with their change, and theirs stays', async ({ page, baseURL }) => {
	await signInAs(page, 'editor');
	const before = await demo(page.request);
	await page.goto(`/sessions/${before.session.id}/align?clip=${mid(before).id}`);
	// Someone else (another signed-in browser of the same editor) moves Rig mid meanwhile.
	const other = await apiAs(baseURL, 'editor');
	const theirs = await other.post(`/api/sessions/${before.session.id}/alignment`, {
		data: { version: before.session.version, edit: { kind: 'offset', clipId: mid(before).id, offsetSeconds: 2.45, reason: 'the other browser' } }
	});
	expect(theirs.status()).toBe(200);

	await page.getByLabel('Offset (s)').fill('2.55');
	await page.getByRole('button', { name: 'Set offset and drift' }).click();
	await expect(page.getByRole('alert')).toContainText('Eli Marchetti changed the offset of Rig mid from');
	await expect(page.getByRole('alert')).toContainText(`to +2.450000 s`);
	await expect(page.getByRole('alert')).toContainText('Your change was not saved');
	await expect(page.getByLabel('Offset (s)')).toHaveValue('2.55');
	expect(mid(await demo(page.request)).offsetSeconds).toBe(2.45);
	await putBack(page.request, before);
	await other.dispose();
});

test('reverting to a revision with JavaScript off restores its offset', async ({ page }) => {
	await signInAs(page, 'editor');
	const before = await demo(page.request);
	const changed = await page.request.post(`/api/sessions/${before.session.id}/alignment`, {
		data: { version: before.session.version, edit: { kind: 'offset', clipId: mid(before).id, offsetSeconds: 2.4, reason: 'to be reverted' } }
	});
	expect(changed.status()).toBe(200);
	await page.goto(`/sessions/${before.session.id}/align`);
	await page.getByRole('button', { name: `Revert to v${before.session.version}` }).click();
	await expect(page.getByRole('status')).toContainText(`Saved (version ${before.session.version + 2}): reverted to version ${before.session.version}.`);
	expect(mid(await demo(page.request)).offsetSeconds).toBe(mid(before).offsetSeconds);
});
