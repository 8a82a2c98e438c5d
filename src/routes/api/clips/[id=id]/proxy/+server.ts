import { error } from '@sveltejs/kit';
import { requirePermission } from '$lib/server/guard';
import { fileResponse } from '$lib/server/http-range';
import type { RequestHandler } from './$types';

/** The clip's listening copy (mono AAC), with HTTP Range so players can seek. */
export const GET: RequestHandler = async (event) => {
	const { scope } = requirePermission(event, 'sessions:read');
	const clip = scope.clip(event.params.id);
	if (!clip.audioProxyPath) error(409, { code: 'not_ready', message: 'The listening copy of this clip is still being made; try again shortly.' });
	return fileResponse(event.request, clip.audioProxyPath, 'audio/mp4');
};
