import { expect, type APIRequestContext, type Page } from '@playwright/test';
import { createHash } from 'node:crypto';
import http from 'node:http';

/*
 * A few tus requests by hand (https://tus.io/protocols/resumable-upload), so the tests can
 * cut a connection midway or send what no well-behaved client would.
 */

export const TUS = { 'tus-resumable': '1.0.0' };

export function sha256(bytes: Buffer): string {
	return createHash('sha256').update(bytes).digest('hex');
}

export function tusMetadata(fields: Record<string, string>): string {
	return Object.entries(fields)
		.map(([key, value]) => `${key} ${Buffer.from(value).toString('base64')}`)
		.join(',');
}

/** Creates an upload; answers the response (201 with a Location, or a refusal). */
export async function tusCreate(request: APIRequestContext, length: number, metadata: Record<string, string>) {
	return request.post('/api/uploads', {
		headers: { ...TUS, 'upload-length': String(length), 'upload-metadata': tusMetadata(metadata) },
		maxRedirects: 0
	});
}

export async function tusPatch(request: APIRequestContext, location: string, offset: number, bytes: Buffer) {
	return request.patch(location, {
		headers: { ...TUS, 'upload-offset': String(offset), 'content-type': 'application/offset+octet-stream' },
		data: bytes
	});
}

export async function tusHead(request: APIRequestContext, location: string) {
	return request.fetch(location, { method: 'HEAD', headers: TUS });
}

/** A whole upload in one PATCH; answers the final status and JSON body. */
export async function tusUpload(request: APIRequestContext, sessionId: string, filename: string, bytes: Buffer) {
	const created = await tusCreate(request, bytes.length, { sessionId, filename });
	if (created.status() !== 201) return { status: created.status(), body: await created.json() };
	const location = created.headers()['location'];
	expect(location).toMatch(/^\/api\/uploads\/[0-9a-f]{32}$/);
	const finished = await tusPatch(request, location, 0, bytes);
	return { status: finished.status(), body: await finished.json(), location };
}

/** The signed-in page's cookies, as a Cookie header for requests made outside the browser. */
export async function cookieHeader(page: Page): Promise<string> {
	return (await page.context().cookies()).map((c) => `${c.name}=${c.value}`).join('; ');
}

/**
 * Starts a PATCH announcing the whole rest of the file, sends only `sendBytes` of it and
 * then drops the connection, as a train going into a tunnel would.
 */
export function cutPatch(baseURL: string, cookie: string, location: string, bytes: Buffer, sendBytes: number): Promise<void> {
	const url = new URL(location, baseURL);
	return new Promise((resolve) => {
		const request = http.request({
			host: url.hostname,
			port: url.port,
			path: url.pathname,
			method: 'PATCH',
			headers: {
				cookie,
				...TUS,
				'upload-offset': '0',
				'content-type': 'application/offset+octet-stream',
				'content-length': String(bytes.length)
			}
		});
		request.on('error', () => resolve());
		request.on('response', () => resolve());
		request.write(bytes.subarray(0, sendBytes), () => {
			// Give the server a moment to store what arrived, then cut.
			setTimeout(() => {
				request.destroy();
				resolve();
			}, 400);
		});
	});
}
