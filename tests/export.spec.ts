import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { expect, test, type Page } from '@playwright/test';
import Papa from 'papaparse';
import { apiAs, e2eDatabase, PEOPLE, signInAs } from './helpers';

/*
 * The processor's export of the demo session ("Market Square fountain, lap 2", aligned, not
 * approved): preview, confirmation, downloads read back with papaparse, the export record,
 * and the same files by API token.
 */

function demoSessionId(): string {
	const db = e2eDatabase();
	try {
		const row = db.prepare("select id from capture_sessions where name = 'Market Square fountain, lap 2'").get() as { id: string };
		return row.id;
	} finally {
		db.close();
	}
}

async function downloadText(page: Page, name: RegExp): Promise<{ text: string; fileName: string }> {
	const waiting = page.waitForEvent('download');
	await page.getByRole('link', { name }).click();
	const download = await waiting;
	return { text: readFileSync((await download.path())!, 'utf8'), fileName: download.suggestedFilename() };
}

test('a processor previews the demo session, confirms the unapproved export and downloads CSV equal to the preview', async ({ page }) => {
	const sessionId = demoSessionId();
	await signInAs(page, 'processor');
	await page.goto(`/sessions/${sessionId}/export`);
	await expect(page.getByRole('heading', { name: 'Timing table and frame lists' })).toBeVisible();
	await expect(page.getByText('This session is not approved yet.')).toBeVisible();
	// The usable span is about 74 s: 2 instants a second → 148 (REFERENCES.md capture practice, within 50–150).
	const instants = page.locator('dt', { hasText: 'Instants' }).locator('xpath=following-sibling::dd[1]');
	await expect(instants).toHaveText('148');
	await expect(page.getByTestId('preview-row')).toHaveCount(50);

	await page.getByRole('link', { name: 'Export anyway, marked unapproved' }).click();
	await expect(page.getByRole('link', { name: 'Download Timing table CSV' })).toBeVisible();
	const { text, fileName } = await downloadText(page, /Download Timing table CSV/);
	expect(fileName).toMatch(/^market-square-fountain-lap-2-r\d+-UNAPPROVED-timing\.csv$/);

	// RFC 4180 read back with papaparse; every record says UNAPPROVED.
	const parsed = Papa.parse<Record<string, string>>(text, { header: true, skipEmptyLines: true });
	expect(parsed.errors).toEqual([]);
	expect(parsed.data).toHaveLength(148);
	expect(new Set(parsed.data.map((r) => r.approval))).toEqual(new Set(['UNAPPROVED']));
	const keys = parsed.meta.fields!.filter((f) => f.endsWith('_frame')).map((f) => f.slice(0, -'_frame'.length));
	expect(keys).toHaveLength(3);

	// The preview's first page equals the CSV's first 50 records, cell by cell.
	const previewRows = await page.getByTestId('preview-row').evaluateAll((rows) => rows.map((r) => Array.from(r.querySelectorAll('td')).map((td) => td.textContent!.trim())));
	previewRows.forEach((cells, i) => {
		const record = parsed.data[i];
		expect(Number(cells[0])).toBe(Number(record.instant));
		expect(Number(cells[1])).toBeCloseTo(Number(record.session_time_s), 6);
		keys.forEach((key, c) => {
			expect(Number(cells[2 + c * 3]), `row ${i} ${key} frame`).toBe(Number(record[`${key}_frame`]));
			expect(cells[3 + c * 3]).toBe(record[`${key}_timecode`]);
			expect(Number(cells[4 + c * 3].replace('−', '-'))).toBeCloseTo(Number(record[`${key}_residual_ms`]), 3);
		});
	});

	// Recorded, with the file's sha256; the same revision and parameters give the same bytes.
	const sha = createHash('sha256').update(text).digest('hex');
	const db = e2eDatabase();
	const record = db.prepare('select format, sha256, byte_size as byteSize, params_json as params from exports where sha256 = ?').get(sha) as { format: string; byteSize: number; params: string } | undefined;
	db.close();
	expect(record?.format).toBe('csv');
	expect(record?.byteSize).toBe(Buffer.byteLength(text));
	expect(JSON.parse(record!.params)).toMatchObject({ format: 'csv', instants: { kind: 'count', count: 148 }, unapproved: true });
	const again = await downloadText(page, /Download Timing table CSV/);
	expect(again.text).toBe(text);

	// A second page of the preview continues where the first stopped.
	await page.getByRole('link', { name: 'Next →' }).click();
	await expect(page.getByTestId('preview-row').first().locator('td').first()).toHaveText('50');

	// Instants every 0.5 s of the same span: 8.799–82.785 s (it ends half a frame after the 30 fps low
	// camera's last frame), so 0, 0.5, … 73.5 s into it: 148 rows.
	await page.getByLabel('One every').check();
	await page.getByLabel('Seconds between instants').fill('0.5');
	await page.getByRole('button', { name: 'Update preview' }).click();
	await expect(instants).toHaveText('148');
	const json = await downloadText(page, /Download Timing table JSON/);
	const doc = JSON.parse(json.text);
	expect(doc.schema).toBe('lockstep-timing-table/1');
	expect(doc.approval).toBe('unapproved');
	expect(doc.instants).toEqual({ kind: 'every', everySeconds: 0.5 });
	expect(doc.rows).toHaveLength(148);
	await expect(page.getByRole('heading', { name: 'Recent exports' })).toBeVisible();
});

test('an editor sees the preview but cannot download', async ({ page }) => {
	await signInAs(page, 'editor');
	await page.goto(`/sessions/${demoSessionId()}/export`);
	await expect(page.getByText('Only a processor exports timing tables.')).toBeVisible();
	await expect(page.getByRole('link', { name: /^Download/ })).toHaveCount(0);
	const response = await page.request.get(`/api/sessions/${demoSessionId()}/timing-table?format=csv&unapproved=ok`);
	expect(response.status()).toBe(403);
	expect((await response.json()).error.code).toBe('forbidden');
});

test('a processor API token exports every format; errors come in the common shape', async ({ baseURL, playwright }) => {
	const admin = await apiAs(baseURL, 'admin');
	const created = await admin.post('/api/admin/tokens', { data: { name: `Export pipeline ${Date.now()}`, role: 'processor' } });
	expect(created.status()).toBe(201);
	const { secret } = (await created.json()) as { secret: string };
	await admin.dispose();
	const api = await playwright.request.newContext({ baseURL, extraHTTPHeaders: { authorization: `Bearer ${secret}` } });
	const base = `/api/sessions/${demoSessionId()}/timing-table`;

	const refused = await api.get(`${base}?format=csv&count=100`);
	expect(refused.status()).toBe(409);
	const refusal = await refused.json();
	expect(refusal.error.code).toBe('session_not_approved');
	expect(refusal.error.message).toMatch(/unapproved=ok/);

	const bad = await api.get(`${base}?format=csv&every=soon&unapproved=ok`);
	expect(bad.status()).toBe(400);
	expect((await bad.json()).error).toEqual({ code: 'invalid_input', message: 'every must be a number.' });
	const both = await api.get(`${base}?every=1&count=3&unapproved=ok`);
	expect((await both.json()).error.code).toBe('invalid_input');

	const otio = await api.get(`${base}?format=otio&every=1&unapproved=ok`);
	expect(otio.status()).toBe(200);
	const timeline = await otio.json();
	expect(timeline.OTIO_SCHEMA).toBe('Timeline.1');
	expect(timeline.tracks.children.map((t: { OTIO_SCHEMA: string; kind: string }) => `${t.OTIO_SCHEMA} ${t.kind}`)).toEqual(['Track.1 Video', 'Track.1 Video', 'Track.1 Video']);

	const first = await api.get(`${base}?format=script&count=60&unapproved=ok`);
	const second = await api.get(`${base}?format=script&count=60&unapproved=ok`);
	const script = await first.text();
	expect(first.headers()['content-disposition']).toMatch(/extract-frames\.sh"$/);
	expect(script).toMatch(/^#!\/bin\/sh\n/);
	expect(script).toContain('# UNAPPROVED: revision');
	expect(await second.text()).toBe(script);
	expect(first.headers()['x-lockstep-sha256']).toBe(createHash('sha256').update(script).digest('hex'));

	const summary = await api.get(`${base}?format=summary&unapproved=ok`);
	expect(summary.headers()['content-type']).toMatch(/^text\/html/);
	expect(await summary.text()).toContain('Market Square fountain, lap 2');

	const cameras = await api.get(`${base}?format=csv&table=clips&unapproved=ok`);
	const rows = Papa.parse<Record<string, string>>(await cameras.text(), { header: true, skipEmptyLines: true }).data;
	expect(rows.map((r) => r.frame_rate)).toEqual(['60000/1001', '50/1', '30/1']);
	expect(rows[0].drop_frame).toBe('yes');

	const db = e2eDatabase();
	const byToken = db.prepare('select count(*) as n from exports where api_token_id is not null').get() as { n: number };
	// The script was fetched twice in a row: two export records, one line in the session's activity.
	const scriptExports = db.prepare("select count(*) as n from exports where session_id = ? and format = 'script' and api_token_id is not null").get(demoSessionId()) as { n: number };
	const scriptActivity = db
		.prepare("select count(*) as n from activity where session_id = ? and kind = 'exported' and message like '%extraction script%by API token%'")
		.get(demoSessionId()) as { n: number };
	db.close();
	expect(byToken.n).toBeGreaterThanOrEqual(5);
	expect(scriptExports.n).toBeGreaterThanOrEqual(2);
	expect(scriptActivity.n).toBeLessThan(scriptExports.n);
	await api.dispose();
});
