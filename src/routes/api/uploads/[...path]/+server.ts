import { json } from '@sveltejs/kit';
import { requirePermission } from '$lib/server/guard';
import { handleUploadRequest, uploadSettings } from '$lib/server/uploads';
import type { RequestHandler } from './$types';

/*
 * The tus endpoint (resumable uploads): POST /api/uploads creates an upload whose metadata
 * names the capture session ("sessionId") and the file ("filename"), then HEAD and PATCH
 * /api/uploads/<id> resume and send it, DELETE abandons it. The answer to the last PATCH
 * says what became of the file. GET /api/uploads tells a client the limits.
 */

const tus: RequestHandler = (event) => handleUploadRequest(event, () => requirePermission(event, 'clips:write'));

export const POST = tus;
export const HEAD = tus;
export const PATCH = tus;
export const DELETE = tus;

export const GET: RequestHandler = (event) => {
	requirePermission(event, 'clips:write');
	if (event.params.path) return json({ error: { code: 'not_found', message: 'Uploads cannot be downloaded; clips are served from their session.' } }, { status: 404 });
	return json(uploadSettings());
};
