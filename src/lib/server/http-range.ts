import { createReadStream } from 'node:fs';
import { stat } from 'node:fs/promises';
import { Readable } from 'node:stream';

/** Serves a file, honouring a single `Range: bytes=a-b` request (RFC 9110 §14). */
export async function fileResponse(request: Request, path: string, contentType: string): Promise<Response> {
	const { size } = await stat(path);
	const headers = new Headers({ 'content-type': contentType, 'accept-ranges': 'bytes', 'cache-control': 'private, max-age=3600' });
	const range = request.headers.get('range')?.match(/^bytes=(\d*)-(\d*)$/);
	if (!range) {
		headers.set('content-length', String(size));
		return new Response(toWeb(path), { status: 200, headers });
	}
	let start = range[1] === '' ? Math.max(0, size - Number(range[2])) : Number(range[1]);
	let end = range[1] !== '' && range[2] !== '' ? Number(range[2]) : size - 1;
	end = Math.min(end, size - 1);
	if (start > end || start >= size) {
		headers.set('content-range', `bytes */${size}`);
		return new Response(null, { status: 416, headers });
	}
	start = Math.max(0, start);
	headers.set('content-range', `bytes ${start}-${end}/${size}`);
	headers.set('content-length', String(end - start + 1));
	return new Response(toWeb(path, start, end), { status: 206, headers });
}

function toWeb(path: string, start?: number, end?: number): ReadableStream<Uint8Array> {
	return Readable.toWeb(createReadStream(path, { start, end })) as ReadableStream<Uint8Array>;
}
