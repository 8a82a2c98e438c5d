import { expect, test, type APIRequestContext, type Page } from '@playwright/test';
import { signInAs } from './helpers';

/*
 * Two browsers on one session: the first save wins, the second is refused with the first
 * person's change in words, and neither change is lost. The timing is put back at the end.
 */

const DEMO = 'Market Square fountain, lap 2';

interface Stored {
	session: { id: string; version: number };
	clips: { id: string; cameraLabel: string; offsetSeconds: number }[];
}

async function stored(request: APIRequestContext, id: string): Promise<Stored> {
	return (await (await request.get(`/api/sessions/${id}`)).json()) as Stored;
}
const offsetOf = (s: Stored, label: string) => s.clips.find((c) => c.cameraLabel === label)!.offsetSeconds;

async function open(page: Page, id: string, lane: string) {
	await page.goto(`/sessions/${id}/align`);
	await expect(page.getByTestId('lane')).toHaveCount(3);
	await page.getByRole('button', { name: `Work on ${lane}` }).click();
}

test('the second of two editors gets the conflict message and loses nothing', async ({ browser }) => {
	const first = await browser.newContext();
	const second = await browser.newContext();
	const pageA = await first.newPage();
	const pageB = await second.newPage();
	await signInAs(pageA, 'editor');
	await signInAs(pageB, 'editor');
	const { sessions } = (await (await pageA.request.get(`/api/sessions?q=${encodeURIComponent(DEMO)}`)).json()) as { sessions: { id: string; name: string }[] };
	const id = sessions.find((s) => s.name === DEMO)!.id;
	const before = await stored(pageA.request, id);

	// Both open the same version.
	await open(pageA, id, 'Rig mid');
	await open(pageB, id, 'Rig low (housing)');

	// A nudges Rig mid one frame later (50 fps: 20 ms) and saves first.
	await pageA.keyboard.press('ArrowRight');
	await expect(pageA.getByRole('status')).toContainText('Saved the offset of Rig mid');
	const afterA = await stored(pageA.request, id);
	expect(offsetOf(afterA, 'Rig mid') - offsetOf(before, 'Rig mid')).toBeCloseTo(0.02, 12);

	// B, still on the old version, nudges Rig low 1 ms earlier: refused, with A's change named.
	await pageB.keyboard.press(',');
	const conflict = pageB.getByTestId('conflict');
	await expect(conflict).toBeVisible();
	await expect(conflict).toContainText('Not saved: someone else changed this session first.');
	await expect(conflict).toContainText('Eli Marchetti changed the offset of Rig mid from');
	await expect(conflict).toContainText(`now at version ${afterA.session.version}`);
	await expect(conflict).toContainText('Kept, not saved: offset of Rig low (housing)');
	await expect(pageB.getByTestId('save-state')).toHaveText('Not saved');

	// Nothing was overwritten: A's change stands, B's did not land.
	const refused = await stored(pageA.request, id);
	expect(refused.session.version).toBe(afterA.session.version);
	expect(offsetOf(refused, 'Rig mid')).toBe(offsetOf(afterA, 'Rig mid'));
	expect(offsetOf(refused, 'Rig low (housing)')).toBe(offsetOf(before, 'Rig low (housing)'));

	// B applies the kept change on top of A's: both are stored.
	await pageB.getByRole('button', { name: 'Apply mine on top' }).click();
	await expect(pageB.getByRole('status')).toContainText('Saved the offset of Rig low (housing)');
	const both = await stored(pageA.request, id);
	expect(offsetOf(both, 'Rig mid')).toBe(offsetOf(afterA, 'Rig mid'));
	expect(offsetOf(both, 'Rig low (housing)') - offsetOf(before, 'Rig low (housing)')).toBeCloseTo(-0.001, 12);
	expect(both.session.version).toBe(afterA.session.version + 1);

	// Put the demo timing back.
	let version = both.session.version;
	for (const clip of before.clips) {
		if (offsetOf(both, clip.cameraLabel) === clip.offsetSeconds) continue;
		const response = await pageA.request.post(`/api/sessions/${id}/alignment`, {
			data: { version, edit: { kind: 'offset', clipId: clip.id, offsetSeconds: clip.offsetSeconds, reason: 'test clean-up' } }
		});
		expect(response.status()).toBe(200);
		version = ((await response.json()) as Stored).session.version;
	}
	await first.close();
	await second.close();
});

test('a save based on an old version is refused by the API with the change that overtook it', async ({ page }) => {
	await signInAs(page, 'editor');
	const { sessions } = (await (await page.request.get(`/api/sessions?q=${encodeURIComponent(DEMO)}`)).json()) as { sessions: { id: string; name: string }[] };
	const id = sessions.find((s) => s.name === DEMO)!.id;
	const before = await stored(page.request, id);
	const mid = before.clips.find((c) => c.cameraLabel === 'Rig mid')!;
	const response = await page.request.post(`/api/sessions/${id}/alignment`, {
		data: { version: before.session.version - 1, edit: { kind: 'offset', clipId: mid.id, offsetSeconds: mid.offsetSeconds + 1 } }
	});
	expect(response.status()).toBe(409);
	const body = (await response.json()) as { error: { code: string; message: string; currentVersion: number; changes: { summary: string }[] } };
	expect(body.error.code).toBe('version_conflict');
	expect(body.error.currentVersion).toBe(before.session.version);
	expect(body.error.changes.length).toBeGreaterThan(0);
	expect(body.error.message).toContain(body.error.changes[0].summary);
	expect(offsetOf(await stored(page.request, id), 'Rig mid')).toBe(mid.offsetSeconds);
});
