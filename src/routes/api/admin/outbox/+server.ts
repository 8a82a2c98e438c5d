import { json } from '@sveltejs/kit';
import { requirePermission } from '$lib/server/guard';
import { listOutbox } from '$lib/server/outbox';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = (event) => {
	const { scope } = requirePermission(event, 'outbox:read');
	return json({ messages: listOutbox(scope) });
};
