import { expect, test, type APIRequestContext } from '@playwright/test';
import { apiAs, signInAs } from './helpers';

/*
 * Listening in two ears on the review page, in a real Chromium: which camera sounds in which
 * ear is read from the page's own audio graph (one analyser per output channel), so a camera
 * panned to the wrong side, or no sound at all, fails here.
 */

// Sound may start without a gesture in this file's browser only; the other files keep Chromium's usual policy.
test.use({
	launchOptions: {
		executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
		args: ['--no-sandbox', '--disable-gpu', '--no-first-run', '--autoplay-policy=no-user-gesture-required']
	}
});

const DEMO = 'Market Square fountain, lap 2';

async function demoSession(api: APIRequestContext): Promise<{ id: string; clips: { id: string; cameraLabel: string; offsetSeconds: number }[] }> {
	const list = (await (await api.get(`/api/sessions?q=${encodeURIComponent('Market Square fountain')}`)).json()) as { sessions: { id: string; name: string }[] };
	const id = list.sessions.find((s) => s.name === DEMO)!.id;
	return { id, clips: ((await (await api.get(`/api/sessions/${id}`)).json()) as { clips: { id: string; cameraLabel: string; offsetSeconds: number }[] }).clips };
}

test('each camera sounds in its own ear, and a camera that has not started yet leaves its ear silent', async ({ page, baseURL }) => {
	const api = await apiAs(baseURL, 'reviewer');
	const session = await demoSession(api);
	await api.dispose();
	const high = session.clips.find((c) => c.cameraLabel === 'Rig high')!;
	const mid = session.clips.find((c) => c.cameraLabel === 'Rig mid')!;
	const low = session.clips.find((c) => c.cameraLabel === 'Rig low (housing)')!;
	// Three seconds before the low camera starts, its ±2 s window holds none of its sound; the reference camera is rolling.
	const early = Number((low.offsetSeconds - 3).toFixed(3));
	expect(early - 2).toBeGreaterThan(high.offsetSeconds);
	await signInAs(page, 'reviewer');
	await page.goto(`/sessions/${session.id}/review?count=1&at=${early}`);
	const panel = page.getByTestId('listen-panel');
	const level = async (ear: 'left' | 'right') => Number(await panel.getAttribute(`data-${ear}-level-db`));
	const heardAt = async () => Number(await panel.getAttribute('data-session-seconds'));

	await panel.getByLabel('Left ear').selectOption({ label: low.cameraLabel });
	await panel.getByLabel('Right ear').selectOption({ label: high.cameraLabel });
	await panel.getByLabel('Around instant').selectOption({ label: `${early.toFixed(3)} s` });
	await panel.getByRole('button', { name: 'Play ±2 s' }).click();
	await expect(panel.getByRole('alert')).toHaveText(`Rig low (housing) recorded nothing within ±2 s of ${early.toFixed(3)} s: that ear stays silent.`);
	await expect(panel).toHaveAttribute('data-playing', 'yes');
	await expect(panel).toHaveAttribute('data-left-clip', '');
	await expect(panel).toHaveAttribute('data-right-clip', high.id);
	await expect.poll(() => level('right'), { message: 'the right ear carries the high camera' }).toBeGreaterThan(-50);
	const first = await heardAt();
	let leftLoudest = -100;
	for (let i = 0; i < 5; i++) {
		leftLoudest = Math.max(leftLoudest, await level('left'));
		await page.waitForTimeout(100);
	}
	expect(leftLoudest, 'nothing of the high camera leaks into the left ear').toBeLessThanOrEqual(-90);
	expect(await heardAt(), 'the heard time moves on').toBeGreaterThan(first);
	expect(first).toBeGreaterThanOrEqual(early - 2);
	// Four seconds played out: the panel says so.
	await expect(panel).toHaveAttribute('data-playing', 'no', { timeout: 8000 });
	await expect(panel.getByRole('button', { name: 'Stop' })).toHaveCount(0);

	// Inside the span both cameras sound, the high one left and the mid one right.
	const middle = page.getByRole('region', { name: /^Instant / }).filter({ hasNotText: 'picked' });
	const middleSeconds = (await middle.getByRole('heading').textContent())!.match(/([\d.]+) s/)![1];
	await panel.getByLabel('Left ear').selectOption({ label: high.cameraLabel });
	await panel.getByLabel('Right ear').selectOption({ label: mid.cameraLabel });
	await panel.getByLabel('Around instant').selectOption({ label: `${middleSeconds} s` });
	await panel.getByRole('button', { name: 'Play ±2 s' }).click();
	await expect(panel).toHaveAttribute('data-left-clip', high.id);
	await expect(panel).toHaveAttribute('data-right-clip', mid.id);
	await expect(panel.getByRole('alert')).toHaveCount(0);
	await expect.poll(() => level('left'), { message: 'the left ear carries the high camera' }).toBeGreaterThan(-50);
	await expect.poll(() => level('right'), { message: 'the right ear carries the mid camera' }).toBeGreaterThan(-50);
	// Played out, the panel says so and both ears fall silent.
	await expect(panel).toHaveAttribute('data-playing', 'no', { timeout: 8000 });
	expect(await heardAt()).toBeGreaterThan(Number(middleSeconds) + 1.5);
	expect(Math.max(await level('left'), await level('right'))).toBeLessThanOrEqual(-90);
});
