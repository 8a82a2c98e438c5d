import { expect, test, type Page } from '@playwright/test';
import { existsSync, readFileSync, readdirSync } from 'node:fs';
import { e2eDatabase, signInAs } from './helpers';
import { tusUpload } from './tus';

/*
 * Every kind of bad input (fixtures/bad, made by scripts/make-bad-inputs.ts) gets its own
 * message, in the page and in the API, and leaves no clip behind. A clip without sound is
 * the exception: it is added, with a warning that it can only be placed by hand.
 */

const REFUSED = [
	{ file: 'empty.mp4', code: 'empty_file', message: /is empty \(0 bytes\)/ },
	{ file: 'notes.mp4', code: 'not_media', message: /is not a video file Lockstep can read/ },
	{ file: 'truncated.mp4', code: 'truncated', message: /is truncated/ },
	{ file: 'audio-only.m4a', code: 'no_video', message: /has no video stream \(only sound\)/ },
	{ file: 'unknown-codec.mp4', code: 'unsupported_codec', message: /uses a codec this server cannot decode/ }
];
const NO_AUDIO = { file: 'no-audio.mp4', warning: /No audio stream: this clip cannot be aligned by sound/ };

async function newSession(page: Page, name: string): Promise<string> {
	const created = await page.request.post('/api/sessions', { data: { name: `${name} ${Date.now().toString(36)}`, site: 'Bad inputs' } });
	expect(created.status()).toBe(201);
	return (await created.json()).session.id;
}

function clipRows(sessionId: string): { original_name: string; problem: string | null }[] {
	const db = e2eDatabase();
	try {
		return db.prepare('select original_name, problem from clips where session_id = ?').all(sessionId) as { original_name: string; problem: string | null }[];
	} finally {
		db.close();
	}
}

function pendingUploads(): Set<string> {
	// Partial uploads are bare ids; finished ones keep only their small .json record.
	if (!existsSync('data/e2e/media/uploads')) return new Set();
	return new Set(readdirSync('data/e2e/media/uploads').filter((name) => !name.endsWith('.json')));
}

function newPending(before: Set<string>): string[] {
	return [...pendingUploads()].filter((name) => !before.has(name));
}

test('the page names what is wrong with each bad file and adds only the one without sound', async ({ page }) => {
	await signInAs(page, 'editor');
	const sessionId = await newSession(page, 'Bad files through the page');
	await page.goto(`/sessions/${sessionId}`);
	const before = pendingUploads();

	await page.getByLabel('Choose clips').setInputFiles([...REFUSED, NO_AUDIO].map((k) => `fixtures/bad/${k.file}`));
	const uploads = page.getByRole('list', { name: 'Uploads' });
	for (const kind of REFUSED) {
		const item = uploads.getByRole('listitem').filter({ hasText: kind.file });
		await expect(item).toContainText('Not added', { timeout: 30_000 });
		await expect(item).toContainText(kind.message);
	}
	const flagged = uploads.getByRole('listitem').filter({ hasText: NO_AUDIO.file });
	await expect(flagged).toContainText('Added', { timeout: 30_000 });
	await expect(flagged).toContainText(NO_AUDIO.warning);

	const rows = clipRows(sessionId);
	expect(rows.map((r) => r.original_name)).toEqual([NO_AUDIO.file]);
	expect(rows[0].problem).toMatch(NO_AUDIO.warning);
	expect(newPending(before)).toEqual([]);
});

test('the upload API answers each bad file with its own code and message, and keeps nothing', async ({ page }) => {
	await signInAs(page, 'editor');
	const sessionId = await newSession(page, 'Bad files through the API');
	const before = pendingUploads();
	for (const kind of REFUSED) {
		const { status, body } = await tusUpload(page.request, sessionId, kind.file, readFileSync(`fixtures/bad/${kind.file}`));
		expect(status, kind.file).toBe(422);
		expect(body.error.code, kind.file).toBe(kind.code);
		expect(body.error.message, kind.file).toMatch(kind.message);
	}
	expect(clipRows(sessionId)).toEqual([]);

	const { status, body } = await tusUpload(page.request, sessionId, NO_AUDIO.file, readFileSync(`fixtures/bad/${NO_AUDIO.file}`));
	expect(status).toBe(200);
	expect(body.outcome.kind).toBe('added');
	expect(body.outcome.warning).toMatch(NO_AUDIO.warning);
	expect(clipRows(sessionId)).toHaveLength(1);
	expect(newPending(before)).toEqual([]);
});

test('bad metadata is refused when the upload is created', async ({ page }) => {
	await signInAs(page, 'editor');
	const sessionId = await newSession(page, 'Bad metadata');
	const bytes = readFileSync('fixtures/upload/cam-low-25.mp4');
	const cases = [
		{ metadata: { filename: 'a.mp4' }, status: 400, message: /Say which capture session/ },
		{ metadata: { sessionId }, status: 400, message: /Give the file name/ },
		{ metadata: { sessionId, filename: 'a.mp4', cameraPosition: 'sky' }, status: 400, message: /Choose high, mid, low or other/ },
		{ metadata: { sessionId: 'no-such-session', filename: 'a.mp4' }, status: 404, message: /No such capture session/ }
	];
	for (const c of cases) {
		const response = await page.request.post('/api/uploads', {
			headers: {
				'tus-resumable': '1.0.0',
				'upload-length': String(bytes.length),
				'upload-metadata': Object.entries(c.metadata)
					.map(([k, v]) => `${k} ${Buffer.from(v).toString('base64')}`)
					.join(',')
			}
		});
		expect(response.status(), JSON.stringify(c.metadata)).toBe(c.status);
		expect((await response.json()).error.message).toMatch(c.message);
	}
});
