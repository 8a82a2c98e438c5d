import { requirePermission } from '$lib/server/guard';
import { listOutbox } from '$lib/server/outbox';
import type { PageServerLoad } from './$types';

export const load = ((event) => {
	const { scope } = requirePermission(event, 'outbox:read');
	return { messages: listOutbox(scope), relay: Boolean(process.env.SMTP_URL) };
}) satisfies PageServerLoad;
