import { requirePermission } from '$lib/server/guard';
import { outboxMessage } from '$lib/server/outbox';
import { apiRefusal } from '$lib/server/refusal';
import type { PageServerLoad } from './$types';

export const load = ((event) => {
	const { scope } = requirePermission(event, 'outbox:read');
	try {
		return { message: outboxMessage(scope, event.params.id) };
	} catch (err) {
		apiRefusal(err);
	}
}) satisfies PageServerLoad;
