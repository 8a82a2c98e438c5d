import { json } from '@sveltejs/kit';
import { editClip, publicClip } from '$lib/server/clips';
import { requirePermission } from '$lib/server/guard';
import { answer, jsonBody } from '$lib/server/refusal';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = (event) => {
	const { scope } = requirePermission(event, 'sessions:read');
	return json({ clip: publicClip(scope.clip(event.params.id)) });
};

export const PATCH: RequestHandler = async (event) => {
	const { scope, userId } = requirePermission(event, 'clips:write');
	scope.clip(event.params.id);
	const body = await answer(() => jsonBody(event));
	return json({ clip: publicClip(await answer(() => editClip(scope, event.params.id, userId, body))) });
};
