import { json } from '@sveltejs/kit';
import { requirePermission } from '$lib/server/guard';
import { outboxMessage } from '$lib/server/outbox';
import { answer } from '$lib/server/refusal';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	const { scope } = requirePermission(event, 'outbox:read');
	return json({ message: await answer(() => outboxMessage(scope, event.params.id)) });
};
