import { createHash } from 'node:crypto';
import { createReadStream } from 'node:fs';
import { mkdir } from 'node:fs/promises';
import { join, resolve } from 'node:path';

/*
 * Where media lives under MEDIA_ROOT:
 *   uploads/                      tus partial uploads, until they finish
 *   originals/<workspace>/<sha>/  untouched originals, named as uploaded (never rewritten)
 *   derived/<clip>/               audio proxy, waveform peaks, frame timestamps
 */

export function mediaRoot(): string {
	return resolve(process.env.MEDIA_ROOT ?? 'data/media');
}

export function uploadsDir(): string {
	return join(mediaRoot(), 'uploads');
}

export async function originalsDir(workspaceId: string, sha256: string): Promise<string> {
	const dir = join(mediaRoot(), 'originals', workspaceId, sha256);
	await mkdir(dir, { recursive: true });
	return dir;
}

export async function derivedDir(clipId: string): Promise<string> {
	const dir = join(mediaRoot(), 'derived', clipId);
	await mkdir(dir, { recursive: true });
	return dir;
}

export function sha256OfFile(path: string): Promise<string> {
	return new Promise((resolvePromise, reject) => {
		const hash = createHash('sha256');
		createReadStream(path)
			.on('data', (chunk) => hash.update(chunk))
			.on('error', reject)
			.on('end', () => resolvePromise(hash.digest('hex')));
	});
}

/** A file name safe to store: no directories, no control characters, not empty. */
export function safeFileName(name: string): string {
	const base = name.split(/[\\/]/).pop() ?? '';
	const cleaned = base.replace(/[\u0000-\u001f<>:"|?*]/g, '_').replace(/^\.+/, '').slice(0, 200);
	return cleaned || 'clip';
}
