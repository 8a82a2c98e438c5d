import { expect, test, type APIRequestContext, type Page } from '@playwright/test';
import { mkdirSync } from 'node:fs';
import { signInAs } from './helpers';

/*
 * The alignment workbench on the demo session. Every test puts the timing back as it
 * found it (offsets, drift, span), so later files see the demo session as seeded.
 */

const DEMO = 'Market Square fountain, lap 2';

interface StoredClip {
	id: string;
	cameraLabel: string;
	offsetSeconds: number;
	driftPpm: number;
	sampleRate: number;
	frameRateNum: number;
	frameRateDen: number;
}
interface Stored {
	session: { id: string; version: number; usableStartSeconds: number; usableEndSeconds: number; referenceClipId: string };
	clips: StoredClip[];
}

async function demoSessionId(request: APIRequestContext): Promise<string> {
	const response = await request.get(`/api/sessions?q=${encodeURIComponent(DEMO)}`);
	const { sessions } = (await response.json()) as { sessions: { id: string; name: string }[] };
	const found = sessions.find((s) => s.name === DEMO);
	expect(found, 'the demo session is seeded').toBeTruthy();
	return found!.id;
}

async function stored(request: APIRequestContext, id: string): Promise<Stored> {
	const response = await request.get(`/api/sessions/${id}`);
	expect(response.ok()).toBe(true);
	return (await response.json()) as Stored;
}

const clipNamed = (s: Stored, label: string) => s.clips.find((c) => c.cameraLabel === label)!;

async function openWorkbench(page: Page, id: string) {
	await page.goto(`/sessions/${id}/align`);
	await expect(page.getByRole('heading', { name: 'Alignment workbench' })).toBeVisible();
	await expect(page.getByTestId('lane')).toHaveCount(3);
}

/** Signs in as the editor and opens the demo session's workbench: the session's id and its timing before the test. */
async function editorAtWorkbench(page: Page): Promise<{ id: string; before: Stored }> {
	await signInAs(page, 'editor');
	const id = await demoSessionId(page.request);
	const before = await stored(page.request, id);
	await openWorkbench(page, id);
	return { id, before };
}

async function waitSaved(page: Page) {
	await expect(page.getByTestId('save-state')).toHaveText('All changes saved');
}

/** Puts offsets, drift and span back with the API (itself under test in the other specs). */
async function restore(request: APIRequestContext, id: string, before: Stored) {
	const now = await stored(request, id);
	let version = now.session.version;
	const send = async (edit: Record<string, unknown>) => {
		const response = await request.post(`/api/sessions/${id}/alignment`, { data: { version, edit } });
		expect(response.status(), await response.text()).toBe(200);
		version = ((await response.json()) as Stored).session.version;
	};
	for (const clip of before.clips) {
		const current = clipNamed(now, clip.cameraLabel);
		if (current.offsetSeconds !== clip.offsetSeconds) await send({ kind: 'offset', clipId: clip.id, offsetSeconds: clip.offsetSeconds, reason: 'test clean-up' });
		if (current.driftPpm !== clip.driftPpm) await send({ kind: 'drift', clipId: clip.id, driftPpm: clip.driftPpm, reason: 'test clean-up' });
	}
	if (now.session.usableStartSeconds !== before.session.usableStartSeconds || now.session.usableEndSeconds !== before.session.usableEndSeconds) {
		await send({ kind: 'usable_span', startSeconds: before.session.usableStartSeconds, endSeconds: before.session.usableEndSeconds, reason: 'test clean-up' });
	}
}

test('nudging by keyboard moves the stored offset by exactly one sample, one millisecond and one frame; undo takes it back', async ({ page }) => {
	const { id, before } = await editorAtWorkbench(page);
	const mid = clipNamed(before, 'Rig mid');
	await page.getByRole('button', { name: 'Work on Rig mid' }).click();

	const steps: { key: string; seconds: number; what: string }[] = [
		// One sample at the clip's own rate (48 kHz), 1 ms, one frame at 50/1 fps: 1/rate and den/num (common practice).
		{ key: ']', seconds: 1 / mid.sampleRate, what: 'one sample' },
		{ key: '.', seconds: 0.001, what: 'one millisecond' },
		{ key: 'ArrowRight', seconds: mid.frameRateDen / mid.frameRateNum, what: 'one frame' }
	];
	let previous = mid.offsetSeconds;
	for (const step of steps) {
		await page.keyboard.press(step.key);
		await expect(page.getByRole('status')).toContainText('Saved the offset of Rig mid');
		await waitSaved(page);
		const now = clipNamed(await stored(page.request, id), 'Rig mid').offsetSeconds;
		expect(now - previous, step.what).toBeCloseTo(step.seconds, 12);
		previous = now;
	}
	expect(mid.sampleRate).toBe(48000);

	// Undo three times: the stored offset is the one we started from.
	for (let i = 0; i < 3; i++) {
		await page.keyboard.press('Control+z');
		await waitSaved(page);
	}
	await expect(page.getByRole('status')).toContainText('Undid the offset of Rig mid');
	expect(clipNamed(await stored(page.request, id), 'Rig mid').offsetSeconds).toBe(mid.offsetSeconds);
	// And redo puts the last nudge back.
	await page.keyboard.press('Control+Shift+z');
	await waitSaved(page);
	expect(clipNamed(await stored(page.request, id), 'Rig mid').offsetSeconds).toBeCloseTo(mid.offsetSeconds + 1 / 48000, 12);
	await restore(page.request, id, before);
});

test('at the deepest zoom a lane draws single samples, and a one-sample nudge moves them by one sample', async ({ page }) => {
	const { id, before } = await editorAtWorkbench(page);
	const mid = clipNamed(before, 'Rig mid');
	await page.getByRole('button', { name: 'Work on Rig mid' }).click();
	// The second lap, where every camera has sound; zooming keeps the playhead in place.
	const ruler = (await page.getByTestId('ruler').boundingBox())!;
	await page.mouse.click(ruler.x + ruler.width * 0.43, ruler.y + 10);
	const trace = page.locator(`[data-testid="lane"][data-clip="${mid.id}"] [data-testid="sample-trace"]`);
	await expect(trace).toHaveCount(0);
	const samplesFetched = page.waitForResponse((r) => r.url().includes(`/api/clips/${mid.id}/samples?`) && r.status() === 200);
	for (let i = 0; i < 20; i++) await page.getByRole('button', { name: 'Zoom in' }).click();
	const window = (await (await samplesFetched).json()) as { sampleRate: number; startSample: number; samples: number[] };
	expect(window.sampleRate).toBe(48000);
	expect(window.samples.length).toBeGreaterThan(10);
	expect(window.samples.some((v) => v !== 0), 'the square is heard here').toBe(true);
	await expect(trace).toHaveAttribute('data-first-sample-x', /\d/);
	const pxPerSample = Number(await trace.getAttribute('data-px-per-sample'));
	// At the deepest zoom (16 px a 48 kHz sample) each sample is a dot of its own.
	expect(pxPerSample).toBeGreaterThan(10);
	const xBefore = Number(await trace.getAttribute('data-first-sample-x'));
	const firstSample = await trace.getAttribute('data-first-sample');

	// The window endpoint refuses what it cannot serve, saying why.
	const refusal = async (query: string) => {
		const response = await page.request.get(`/api/clips/${mid.id}/samples?${query}`);
		return [response.status(), ((await response.json()) as { error: { message: string } }).error.message];
	};
	expect(await refusal('start=2&end=1')).toEqual([400, 'end must be after start.']);
	expect(await refusal('start=1&end=2')).toEqual([400, 'Ask for at most 32768 samples at a time (0.683 s at 48000 Hz); use the peaks for longer windows.']);
	expect(await refusal('start=500&end=500.1')).toEqual([400, 'start is past the end of the clip (82.000 s).']);
	expect(await refusal('end=1')).toEqual([400, 'Give start as seconds of clip time.']);

	await page.keyboard.press(']');
	await waitSaved(page);
	expect(clipNamed(await stored(page.request, id), 'Rig mid').offsetSeconds - mid.offsetSeconds).toBeCloseTo(1 / 48000, 12);
	await expect(trace).not.toHaveAttribute('data-first-sample-x', xBefore.toFixed(3));
	expect(await trace.getAttribute('data-first-sample')).toBe(firstSample);
	// The same sample is drawn one sample's width later (×(1 + drift) on the session timeline, under 1e-4 here).
	expect(Number(await trace.getAttribute('data-first-sample-x')) - xBefore).toBeCloseTo(pxPerSample, 1);
	await restore(page.request, id, before);
});

test('dragging the usable span handles stores the span shown', async ({ page }) => {
	const { id, before } = await editorAtWorkbench(page);

	for (const [name, dx] of [['Usable span start', 90], ['Usable span end', -120]] as const) {
		const handle = page.getByRole('slider', { name });
		const box = (await handle.boundingBox())!;
		await page.mouse.move(box.x + box.width / 2, box.y + 30);
		await page.mouse.down();
		await page.mouse.move(box.x + box.width / 2 + dx / 2, box.y + 30, { steps: 4 });
		await page.mouse.move(box.x + box.width / 2 + dx, box.y + 30, { steps: 4 });
		await page.mouse.up();
		await expect(page.getByRole('status')).toContainText('Saved the usable span');
		await waitSaved(page);
	}
	const after = (await stored(page.request, id)).session;
	expect(after.usableStartSeconds).toBeGreaterThan(before.session.usableStartSeconds + 1);
	expect(after.usableEndSeconds).toBeLessThan(before.session.usableEndSeconds - 1);
	await expect(page.getByTestId('usable-span-value')).toHaveText(`${after.usableStartSeconds.toFixed(3)}–${after.usableEndSeconds.toFixed(3)} s`);
	await expect(page.getByRole('slider', { name: 'Usable span start' })).toHaveAttribute('aria-valuenow', String(after.usableStartSeconds));
	await restore(page.request, id, before);
});

test('reverting to a revision restores the timing it had', async ({ page }) => {
	const { id, before } = await editorAtWorkbench(page);
	const low = clipNamed(before, 'Rig low (housing)');
	await page.getByRole('button', { name: 'Work on Rig low (housing)' }).click();

	await page.getByLabel('Drift (ppm)').fill('42.5');
	await page.getByLabel('Reason (optional)').fill('trying a rounder drift');
	await page.getByRole('button', { name: 'Set offset and drift' }).click();
	await expect(page.getByRole('status')).toContainText('Saved the drift of Rig low (housing)');
	expect(clipNamed(await stored(page.request, id), 'Rig low (housing)').driftPpm).toBe(42.5);
	const latest = page.getByTestId('revision').first();
	// The engine's drift for the low camera, as the revision words it (truth: +31.0 ppm, fixtures/fountain-lap/truth.json).
	const engineDrift = `${low.driftPpm >= 0 ? '+' : '−'}${Math.abs(low.driftPpm).toFixed(2)}`;
	expect(Math.abs(low.driftPpm - 31)).toBeLessThan(0.5);
	await expect(latest).toContainText(`drift of Rig low (housing) from ${engineDrift} ppm to +42.50 ppm`);
	await expect(latest).toContainText('trying a rounder drift');

	await page.getByRole('button', { name: `Revert to v${before.session.version}` }).click();
	await expect(page.getByRole('status')).toContainText(`Reverted to version ${before.session.version}`);
	await expect(page.getByTestId('revision').first()).toContainText(`reverted to version ${before.session.version}`);
	const after = await stored(page.request, id);
	expect(clipNamed(after, 'Rig low (housing)').driftPpm).toBe(low.driftPpm);
	expect(after.session.version).toBe(before.session.version + 2);
	await restore(page.request, id, before);
});

test('a reviewer sees the workbench read-only and a crafted change is refused', async ({ page }) => {
	await signInAs(page, 'reviewer');
	const id = await demoSessionId(page.request);
	const before = await stored(page.request, id);
	await openWorkbench(page, id);
	await expect(page.getByTestId('read-only')).toContainText('Read-only');
	await expect(page.getByRole('button', { name: 'Undo' })).toHaveCount(0);
	await page.getByRole('button', { name: 'Work on Rig mid' }).click();
	await expect(page.getByRole('button', { name: 'Nudge later by 1 frame' })).toBeDisabled();
	await page.keyboard.press('ArrowRight');

	const mid = clipNamed(before, 'Rig mid');
	const crafted = await page.request.post(`/api/sessions/${id}/alignment`, {
		data: { version: before.session.version, edit: { kind: 'offset', clipId: mid.id, offsetSeconds: mid.offsetSeconds + 0.5 } }
	});
	expect(crafted.status()).toBe(403);
	expect(((await crafted.json()) as { error: { code: string } }).error.code).toBe('forbidden');
	const revert = await page.request.post(`/api/sessions/${id}/revisions/whatever-id/revert`, { data: { version: before.session.version } });
	expect(revert.status()).toBe(403);
	const after = await stored(page.request, id);
	expect(clipNamed(after, 'Rig mid').offsetSeconds).toBe(mid.offsetSeconds);
	expect(after.session.version).toBe(before.session.version);
});

test('screenshots of the workbench with the demo session', async ({ page }) => {
	test.setTimeout(180_000);
	mkdirSync('screens', { recursive: true });
	await page.setViewportSize({ width: 1600, height: 1100 });
	await signInAs(page, 'editor');
	const id = await demoSessionId(page.request);
	await openWorkbench(page, id);
	await page.waitForTimeout(1200);
	await page.screenshot({ path: 'screens/workbench-whole-session-light.png', fullPage: true });
	await page.emulateMedia({ colorScheme: 'dark' });
	await page.waitForTimeout(300);
	await page.screenshot({ path: 'screens/workbench-whole-session-dark.png', fullPage: true });
	await page.getByRole('button', { name: 'Work on Rig mid' }).click();
	await page.getByRole('button', { name: 'Show correlation and drift fit' }).click();
	await expect(page.getByRole('figure', { name: 'Drift fit' }).locator('canvas')).toBeVisible();
	// The correlation kept by the engine: a curve around the chosen lag and three runner-up peaks, each weaker than it.
	const correlation = page.getByTestId('correlation-plot');
	await expect(correlation.locator('canvas')).toBeVisible();
	const heights = await correlation.getByRole('table', { name: 'Runner-up peaks' }).locator('tbody tr td:last-child').allTextContents();
	// Shown as a share of the chosen peak, in per cent.
	expect(heights).toHaveLength(3);
	for (const height of heights) expect(Number(height.split(' ')[0])).toBeLessThan(100);
	// Put the playhead on the second lap (zoom keeps it in place), where all three cameras hear the square.
	const ruler = (await page.getByTestId('ruler').boundingBox())!;
	await page.mouse.click(ruler.x + ruler.width * 0.43, ruler.y + 10);
	for (let i = 0; i < 6; i++) await page.getByRole('button', { name: 'Zoom in' }).click();
	await page.waitForTimeout(1200);
	await page.screenshot({ path: 'screens/workbench-zoomed-drift-fit.png', fullPage: true });
	for (let i = 0; i < 10; i++) await page.getByRole('button', { name: 'Zoom in' }).click();
	await page.waitForTimeout(1200);
	await page.screenshot({ path: 'screens/workbench-deep-zoom.png' });
	// Out two steps from the deepest zoom: 4 px a sample, a few milliseconds of wave drawn sample by sample.
	for (let i = 0; i < 2; i++) await page.getByRole('button', { name: 'Zoom out' }).click();
	await expect(page.getByTestId('sample-trace').first()).toHaveAttribute('data-px-per-sample', /^4\.0/);
	await expect(page.getByTestId('sample-trace').first()).toHaveAttribute('data-first-sample-x', /\d/);
	await page.waitForTimeout(600);
	await page.screenshot({ path: 'screens/workbench-single-samples.png' });
	// Last: an element screenshot scrolls the page, and the ruler clicks above need it at the top.
	await page.getByTestId('drift-plot').screenshot({ path: 'screens/workbench-correlation-and-drift-fit.png' });
});
