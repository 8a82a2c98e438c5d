import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { expect, test, type APIRequestContext, type Page } from '@playwright/test';
import { readFrameCode, type Truth } from '../scripts/fixtures/truth';
import { apiAs, e2eDatabase, PEOPLE, signInAs, type DemoRole } from './helpers';

/*
 * The review of the demo session ("Market Square fountain, lap 2", aligned): an editor sends it
 * for review, a reviewer spot-checks three instants and sends it back, the editor nudges and
 * sends again, the reviewer approves, a processor exports; each e-mail lands in the outbox.
 * The session is left aligned, as the other files expect it.
 */

const DEMO = 'Market Square fountain, lap 2';
const truth = JSON.parse(readFileSync('fixtures/fountain-lap/truth.json', 'utf8')) as Truth;

interface Clip {
	id: string;
	cameraLabel: string;
	offsetSeconds: number;
}
interface Mail {
	id: string;
	toAddress: string;
	subject: string;
}

async function demoSession(api: APIRequestContext): Promise<{ id: string; status: string; version: number; clips: Clip[] }> {
	const list = (await (await api.get(`/api/sessions?q=${encodeURIComponent('Market Square fountain')}`)).json()) as { sessions: { id: string; name: string }[] };
	const id = list.sessions.find((s) => s.name === DEMO)!.id;
	const body = (await (await api.get(`/api/sessions/${id}`)).json()) as { session: { status: string; version: number }; clips: Clip[] };
	return { id, status: body.session.status, version: body.session.version, clips: body.clips };
}

/** A nudge there and back: two revisions that leave the offsets as they were and the session aligned. */
async function nudgeThereAndBack(editor: APIRequestContext, id: string): Promise<void> {
	let session = await demoSession(editor);
	const mid = session.clips.find((c) => c.cameraLabel === 'Rig mid')!;
	for (const offsetSeconds of [mid.offsetSeconds + 0.0005, mid.offsetSeconds]) {
		const response = await editor.post(`/api/sessions/${id}/alignment`, { data: { version: session.version, edit: { kind: 'offset', clipId: mid.id, offsetSeconds, reason: 'review test nudge' } } });
		expect(response.status()).toBe(200);
		session = await demoSession(editor);
	}
	expect(session.status).toBe('aligned');
}

async function outboxSince(admin: APIRequestContext, seen: Set<string>): Promise<Mail[]> {
	const { messages } = (await (await admin.get('/api/admin/outbox')).json()) as { messages: Mail[] };
	return messages.filter((m) => !seen.has(m.id));
}

async function expectStatus(page: Page, label: string) {
	await expect(page.locator('header').getByText(label, { exact: true })).toBeVisible();
}

test('send for review, spot-check, send back, nudge, send again, approve, export — with mail at each step', async ({ page, browser, playwright, baseURL }) => {
	test.setTimeout(180_000);
	const editorApi = await apiAs(baseURL, 'editor');
	const reviewerApi = await apiAs(baseURL, 'reviewer');
	const processorApi = await apiAs(baseURL, 'processor');
	const admin = await apiAs(baseURL, 'admin');
	let session = await demoSession(editorApi);
	const id = session.id;
	// Start from aligned whatever an earlier run left behind.
	if (session.status === 'in_review') {
		await reviewerApi.post(`/api/sessions/${id}/review/decision`, { data: { version: session.version, decision: 'send_back', note: 'reset by the review test' } });
	} else if (session.status === 'approved') {
		await nudgeThereAndBack(editorApi, id);
	}
	session = await demoSession(editorApi);
	expect(session.status).toBe('aligned');
	const seen = new Set((await outboxSince(admin, new Set())).map((m) => m.id));

	// The editor sends it for review from the review page.
	await signInAs(page, 'editor');
	await page.goto(`/sessions/${id}/review`);
	await expectStatus(page, 'Aligned');
	await page.getByLabel('Note for the reviewer').fill('Lap 2, first pass');
	await page.getByRole('button', { name: 'Send for review' }).click();
	await expectStatus(page, 'In review');
	await expect(page.getByRole('button', { name: 'Send for review' })).toHaveCount(0);
	let mail = await outboxSince(admin, seen);
	expect(mail.some((m) => m.toAddress.includes(PEOPLE.reviewer.email) && m.subject === `Ready for review: ${DEMO}`)).toBe(true);
	mail.forEach((m) => seen.add(m.id));

	// The reviewer checks three instants and sends it back.
	const reviewerContext = await browser.newContext();
	const reviewer = await reviewerContext.newPage();
	await signInAs(reviewer, 'reviewer');
	await reviewer.goto(`/sessions/${id}/review?count=3`);
	const instants = reviewer.getByRole('region', { name: /^Instant / });
	await expect(instants).toHaveCount(3);
	await expect(instants.first().getByRole('img').first()).toBeVisible();
	for (let i = 0; i < 3; i++) {
		const instant = instants.nth(i);
		if (i === 1) {
			await instant.getByLabel('Off', { exact: true }).check();
			await instant.getByLabel('Off by (frames)').fill('1');
		}
		if (i === 2) {
			// The same event marked in two cameras' strips travels with this check.
			for (const label of ['Rig high', 'Rig mid']) {
				await instant.getByRole('button', { name: new RegExp(`^Show ±2 frames of ${label} at`) }).click();
				await instant.getByRole('group', { name: new RegExp(`^Frames around \\d+ of ${label}$`) }).getByRole('button', { name: /^Mark/ }).nth(2).click();
			}
			await expect(instant.getByLabel('Keep the event marked in 2 cameras with this check')).toBeChecked();
		}
		await instant.getByLabel('Note').fill(`check ${i + 1}`);
		await instant.getByRole('button', { name: /^Record check/ }).click();
		await expect(reviewer.getByRole('status').filter({ hasText: /Spot check at .* recorded/ })).toBeVisible();
	}
	const checks = reviewer.getByRole('region', { name: 'Spot checks' }).getByRole('row');
	await expect(checks.filter({ hasText: /check [123]/ })).toHaveCount(3);
	await expect(checks.filter({ hasText: 'Off by about 1 frame' })).toHaveCount(1);
	await expect(checks.filter({ hasText: 'check 3' }).getByText(/^Marked event: (agrees|disagrees)/)).toBeVisible();
	// Written with characters HTML would read as markup: the mail's HTML version must show them as typed.
	await reviewer.getByLabel('Notes for the editors').fill('The mid camera looks a frame late at the second instant <b>check</b> & "see" the strip.');
	await reviewer.getByRole('button', { name: 'Send back with notes' }).click();
	await expectStatus(reviewer, 'Aligned');
	mail = await outboxSince(admin, seen);
	const sentBack = mail.find((m) => m.toAddress.includes(PEOPLE.editor.email) && m.subject === `Sent back: ${DEMO}`);
	expect(sentBack, 'the editor is told the session was sent back').toBeTruthy();
	const { message } = (await (await admin.get(`/api/admin/outbox/${sentBack!.id}`)).json()) as { message: { textBody: string; htmlBody: string | null } };
	expect(message.textBody).toContain('What to look at: The mid camera looks a frame late at the second instant <b>check</b> & "see" the strip.');
	// The HTML part arrived through the local SMTP server beside the text, with the note escaped and a link to the session.
	expect(message.htmlBody).toContain('The mid camera looks a frame late at the second instant &lt;b&gt;check&lt;/b&gt; &amp; &quot;see&quot; the strip.');
	expect(message.htmlBody).not.toContain('<b>check</b>');
	expect(message.htmlBody).toContain(`<a href="${baseURL}/sessions/${id}/review">`);
	// The outbox shows it in an empty sandbox, where the note reads as typed.
	const adminPage = await (await browser.newContext()).newPage();
	await signInAs(adminPage, 'admin');
	await adminPage.goto(`/admin/outbox/${sentBack!.id}`);
	const html = adminPage.locator(`iframe[title="HTML version of “Sent back: ${DEMO}”"]`);
	await expect(html).toHaveAttribute('sandbox', '');
	await expect(adminPage.frameLocator(`iframe[title="HTML version of “Sent back: ${DEMO}”"]`).getByText('<b>check</b> & "see" the strip.', { exact: false })).toBeVisible();
	await adminPage.context().close();
	mail.forEach((m) => seen.add(m.id));

	// The editor nudges and sends again (by API, as a script would).
	await nudgeThereAndBack(editorApi, id);
	session = await demoSession(editorApi);
	const again = await editorApi.post(`/api/sessions/${id}/review/send`, { data: { version: session.version, note: 'Nudged the mid camera' } });
	expect(again.status()).toBe(200);
	expect((await again.json()).session.status).toBe('in_review');

	// A stale version is refused; the reviewer approves the current one on the page.
	const stale = await reviewerApi.post(`/api/sessions/${id}/review/decision`, { data: { version: session.version - 1, decision: 'approve', note: '' } });
	expect(stale.status()).toBe(409);
	await reviewer.goto(`/sessions/${id}/review?count=1`);
	await reviewer.getByRole('button', { name: /^Record check/ }).click();
	await expect(reviewer.getByRole('status').filter({ hasText: /recorded/ })).toBeVisible();
	await reviewer.getByRole('button', { name: `Approve revision ${session.version}` }).click();
	await expectStatus(reviewer, 'Approved');
	await expect(reviewer.getByText(`Approved by ${PEOPLE.reviewer.name}`)).toBeVisible();
	const review = (await (await editorApi.get(`/api/sessions/${id}/review`)).json()) as { approval: { who: string; sessionVersion: number; createdAt: number } };
	expect(review.approval.who).toBe(PEOPLE.reviewer.name);
	expect(review.approval.sessionVersion).toBe(session.version);
	mail = await outboxSince(admin, seen);
	expect(mail.some((m) => m.toAddress.includes(PEOPLE.editor.email) && m.subject === `Approved: ${DEMO}`)).toBe(true);
	expect(mail.some((m) => m.toAddress.includes(PEOPLE.processor.email) && m.subject === `Approved and ready to export: ${DEMO}`)).toBe(true);

	// The processor exports the approved revision.
	const csv = await processorApi.get(`/api/sessions/${id}/timing-table?format=csv`);
	expect(csv.status()).toBe(200);
	expect(await csv.text()).not.toContain('UNAPPROVED');

	// The activity feed on the session page tells the story.
	await page.goto(`/sessions/${id}`);
	const activity = page.getByRole('region', { name: 'Activity' });
	await expect(activity.getByText(/approved revision/).first()).toBeVisible();
	await expect(activity.getByText(/sent revision \d+ back to the editors/).first()).toBeVisible();
	await expect(activity.getByText(/marked event (agrees|disagrees) with the sound/).first()).toBeVisible();

	// Leave the demo session aligned for the other files.
	await nudgeThereAndBack(editorApi, id);
	await reviewerContext.close();
	for (const api of [editorApi, reviewerApi, processorApi, admin]) await api.dispose();
});

test('roles and states are enforced on every review action, crafted requests included', async ({ playwright, baseURL }) => {
	const apis = {
		editor: await apiAs(baseURL, 'editor'),
		reviewer: await apiAs(baseURL, 'reviewer'),
		processor: await apiAs(baseURL, 'processor'),
		admin: await apiAs(baseURL, 'admin'),
		outsider: await apiAs(baseURL, 'outsider')
	};
	const session = await demoSession(apis.editor);
	expect(session.status).toBe('aligned');
	const id = session.id;
	const check = { version: session.version, instantSeconds: 20, verdict: 'in_sync', note: '' };
	const decision = { version: session.version, decision: 'approve', note: '' };
	for (const role of ['reviewer', 'processor', 'admin'] as const) {
		expect((await apis[role].post(`/api/sessions/${id}/review/send`, { data: { version: session.version } })).status(), `${role} sends`).toBe(403);
	}
	// An editor of another workspace may send for review there, but this session does not exist for them.
	expect((await apis.outsider.post(`/api/sessions/${id}/review/send`, { data: { version: session.version } })).status()).toBe(404);
	for (const role of ['editor', 'processor', 'admin', 'outsider'] as const) {
		expect((await apis[role].post(`/api/sessions/${id}/review/checks`, { data: check })).status(), `${role} checks`).toBe(403);
		expect((await apis[role].post(`/api/sessions/${id}/review/decision`, { data: decision })).status(), `${role} decides`).toBe(403);
		const form = await apis[role].post(`/sessions/${id}/review?/decide`, { headers: { accept: 'application/json' }, form: { version: String(session.version), decision: 'approve' } });
		expect(form.status(), `${role} decides by form`).toBe(403);
	}
	// The right role, the wrong state: nothing to check or decide while the session is aligned.
	const early = await apis.reviewer.post(`/api/sessions/${id}/review/checks`, { data: check });
	expect(early.status()).toBe(409);
	expect((await early.json()).error.code).toBe('wrong_state');
	expect((await apis.reviewer.post(`/api/sessions/${id}/review/decision`, { data: decision })).status()).toBe(409);
	// Sending back needs a note.
	const noNote = await apis.reviewer.post(`/api/sessions/${id}/review/decision`, { data: { ...decision, decision: 'send_back' } });
	expect(noNote.status()).toBe(400);
	expect((await demoSession(apis.editor)).status).toBe('aligned');
	for (const api of Object.values(apis)) await api.dispose();
});

/** The 16-bit frame number drawn in a served PNG (fixtures/README.md), read through ffmpeg as grey pixels. */
function frameCodeOf(png: Buffer): { code: number; width: number } {
	const probe = execFileSync('ffprobe', ['-v', 'error', '-select_streams', 'v:0', '-show_entries', 'stream=width,height', '-of', 'csv=p=0', '-'], { input: png }).toString().trim();
	const [width] = probe.split(',').map(Number);
	const luma = execFileSync('ffmpeg', ['-v', 'error', '-i', '-', '-f', 'rawvideo', '-pix_fmt', 'gray', '-'], { input: png });
	return { code: readFrameCode(luma, width, truth.frameCode), width };
}

test('frame grabs come from the right timestamps: each image shows the frame number the timing table names', async ({ playwright, baseURL }) => {
	test.setTimeout(120_000);
	const api = await apiAs(baseURL, 'reviewer');
	const session = await demoSession(api);
	const review = (await (await api.get(`/api/sessions/${session.id}/review?count=3`)).json()) as {
		instants: { cameras: { id: string; label: string }[]; rows: { cells: ({ index: number } | null)[] }[] };
	};
	let compared = 0;
	for (const row of review.instants.rows) {
		for (const [c, cell] of row.cells.entries()) {
			if (!cell) continue;
			const response = await api.get(`/api/clips/${review.instants.cameras[c].id}/frames/${cell.index}?format=png`);
			expect(response.status()).toBe(200);
			expect(response.headers()['content-type']).toBe('image/png');
			const { code, width } = frameCodeOf(await response.body());
			expect(width).toBeLessThanOrEqual(320);
			expect(code, `${review.instants.cameras[c].label} frame ${cell.index}`).toBe(cell.index);
			compared++;
		}
	}
	expect(compared).toBeGreaterThanOrEqual(6);
	// A typed instant gives one row at exactly that time.
	const typed = (await (await api.get(`/api/sessions/${session.id}/review?at=30.5`)).json()) as { instants: { rows: { sessionSeconds: number }[] } };
	expect(typed.instants.rows.map((r) => r.sessionSeconds)).toEqual([30.5]);
	expect((await api.get(`/api/sessions/${session.id}/review?count=0`)).status()).toBe(400);
	// Neighbours too (the ±2 strip), and a JPEG by default.
	const mid = session.clips.find((c) => c.cameraLabel === 'Rig mid')!;
	for (const frame of [437, 438, 439]) {
		expect(frameCodeOf(await (await api.get(`/api/clips/${mid.id}/frames/${frame}?format=png`)).body()).code).toBe(frame);
	}
	const jpeg = await api.get(`/api/clips/${mid.id}/frames/438`);
	expect(jpeg.headers()['content-type']).toBe('image/jpeg');
	expect((await api.get(`/api/clips/${mid.id}/frames/999999`)).status()).toBe(404);
	await api.dispose();
});

test('the slate clap marked in each camera agrees with the sound within a frame', async ({ playwright, baseURL }) => {
	const api = await apiAs(baseURL, 'reviewer');
	const session = await demoSession(api);
	const files: Record<string, string> = { 'Rig high': 'high.mp4', 'Rig mid': 'mid.mp4', 'Rig low (housing)': 'low.mp4' };
	const marks = session.clips
		.filter((c) => files[c.cameraLabel])
		.map((c) => `mark=${c.id}:${truth.clips.find((t) => t.file === files[c.cameraLabel])!.marks.find((m) => m.label === 'slate clap')!.flashFrame}`);
	expect(marks).toHaveLength(3);
	const response = await api.get(`/api/sessions/${session.id}/review/marked-event?${marks.join('&')}`);
	expect(response.status()).toBe(200);
	const { estimate } = (await response.json()) as { estimate: { cameras: { disagreementFrames: number }[] } };
	for (const camera of estimate.cameras) expect(Math.abs(camera.disagreementFrames)).toBeLessThan(1);
	await api.dispose();
});

test('a spot check keeps the result of the event marked with it, in the database and in every answer', async ({ baseURL }) => {
	const editor = await apiAs(baseURL, 'editor');
	const reviewer = await apiAs(baseURL, 'reviewer');
	let session = await demoSession(editor);
	expect(session.status).toBe('aligned');
	const sent = await editor.post(`/api/sessions/${session.id}/review/send`, { data: { version: session.version, note: 'marked-event test' } });
	expect(sent.status()).toBe(200);
	session = await demoSession(editor);
	const files: Record<string, string> = { 'Rig high': 'high.mp4', 'Rig mid': 'mid.mp4', 'Rig low (housing)': 'low.mp4' };
	const marks = session.clips.filter((c) => files[c.cameraLabel]).map((c) => ({
		clipId: c.id,
		frame: truth.clips.find((t) => t.file === files[c.cameraLabel])!.marks.find((m) => m.label === 'slate clap')!.flashFrame
	}));
	const check = { version: session.version, instantSeconds: 12.5, verdict: 'in_sync', note: 'slate clap' };

	// One camera is not an event check: refused with what to do, and nothing stored.
	const single = await reviewer.post(`/api/sessions/${session.id}/review/checks`, { data: { ...check, marks: marks.slice(0, 1) } });
	expect(single.status()).toBe(400);
	expect((await single.json()).error.message).toContain('at least two cameras');
	const badFrame = await reviewer.post(`/api/sessions/${session.id}/review/checks`, { data: { ...check, marks: [marks[0], { ...marks[1], frame: 9_999_999 }] } });
	expect(badFrame.status()).toBe(400);
	expect((await badFrame.json()).error.message).toContain('is not a frame of that clip');

	const response = await reviewer.post(`/api/sessions/${session.id}/review/checks`, { data: { ...check, marks } });
	expect(response.status()).toBe(201);
	const { spotCheck } = (await response.json()) as { spotCheck: { id: string; markedEvent: { consistent: boolean; cameras: { clipId: string; label: string; frame: number; disagreementFrames: number }[] } } };
	expect(spotCheck.markedEvent.cameras.map((c) => c.label).sort()).toEqual(Object.keys(files).sort());
	// The fixture's truth puts the clap in these frames, so the picture agrees with the sound within a frame.
	for (const camera of spotCheck.markedEvent.cameras) expect(Math.abs(camera.disagreementFrames)).toBeLessThan(1);
	expect(spotCheck.markedEvent.consistent).toBe(true);

	const review = (await (await editor.get(`/api/sessions/${session.id}/review`)).json()) as { spotChecks: { id: string; markedEvent: unknown }[] };
	expect(review.spotChecks.find((c) => c.id === spotCheck.id)!.markedEvent).toEqual(spotCheck.markedEvent);
	const db = e2eDatabase();
	const stored = db.prepare('select marked_event_json from spot_checks where id = ?').get(spotCheck.id) as { marked_event_json: string };
	db.close();
	expect(JSON.parse(stored.marked_event_json).cameras.map((c: { frame: number }) => c.frame).sort()).toEqual(marks.map((m) => m.frame).sort());

	// Leave the demo session aligned for the other files.
	const back = await reviewer.post(`/api/sessions/${session.id}/review/decision`, { data: { version: session.version, decision: 'send_back', note: 'reset by the marked-event test' } });
	expect(back.status()).toBe(200);
	await editor.dispose();
	await reviewer.dispose();
});

test('instants are picked by clicking the session timeline or from the keyboard, and shown as markers', async ({ page, baseURL }) => {
	const api = await apiAs(baseURL, 'reviewer');
	const session = await demoSession(api);
	const { instants } = (await (await api.get(`/api/sessions/${session.id}/review?count=2`)).json()) as {
		instants: { usableSpan: { startSeconds: number; endSeconds: number }; extent: { startSeconds: number; endSeconds: number } };
	};
	await api.dispose();
	const { usableSpan, extent } = instants;
	await signInAs(page, 'reviewer');
	await page.goto(`/sessions/${session.id}/review?count=2`);
	const cards = page.getByRole('region', { name: /^Instant / });
	await expect(cards).toHaveCount(2);
	const timeline = page.getByRole('slider', { name: 'Session timeline' });
	// Every camera's lane is painted from the server's peaks.
	await expect(page.locator('[data-lane][data-drawn="yes"]')).toHaveCount(session.clips.length);

	// A click three quarters of the way along adds an instant there; the spread stays.
	const box = (await timeline.boundingBox())!;
	const inner = box.width - 2; // inside its 1 px border
	const clickedSeconds = extent.startSeconds + 0.75 * (extent.endSeconds - extent.startSeconds);
	await timeline.click({ position: { x: 1 + 0.75 * inner, y: box.height / 2 } });
	await expect(page).toHaveURL(/count=2&at=/);
	await expect(cards).toHaveCount(3);
	const picked = cards.filter({ hasText: 'picked' });
	await expect(picked).toHaveCount(1);
	const shown = Number((await picked.getByRole('heading').textContent())!.match(/([\d.]+) s/)![1]);
	// One pixel of the timeline is the most a click can be off by.
	expect(Math.abs(shown - clickedSeconds)).toBeLessThanOrEqual((extent.endSeconds - extent.startSeconds) / inner + 0.001);
	await expect(page.locator('[data-marker="picked"]')).toHaveCount(1);
	await expect(page.locator('[data-marker="spread"]')).toHaveCount(2);

	// From the keyboard: Home goes to the usable span's start, → moves a second, Enter adds.
	await timeline.focus();
	await page.keyboard.press('Home');
	await page.keyboard.press('ArrowRight');
	await page.keyboard.press('ArrowRight');
	await expect(timeline).toHaveAttribute('aria-valuenow', String(Number((usableSpan.startSeconds + 2).toFixed(3))));
	await page.keyboard.press('Enter');
	const keyed = (usableSpan.startSeconds + 2).toFixed(3);
	await expect(page.getByRole('heading', { name: `Instant ${keyed} s picked` })).toBeVisible();
	await expect(page.locator('[data-marker="picked"]')).toHaveCount(2);
	await expect(timeline).toBeFocused();

	// A picked instant is removed from its chip.
	await page.getByRole('link', { name: `Remove the instant at ${keyed} s` }).click();
	await expect(page.locator('[data-marker="picked"]')).toHaveCount(1);
	await expect(cards).toHaveCount(3);
	// Too many picks are refused in words.
	const many = Array.from({ length: 25 }, (_, i) => `at=${usableSpan.startSeconds + i}`).join('&');
	await page.goto(`/sessions/${session.id}/review?count=2&${many}`);
	await expect(page.getByRole('alert')).toHaveText('Pick at most 24 instants at a time; remove some first.');
});
