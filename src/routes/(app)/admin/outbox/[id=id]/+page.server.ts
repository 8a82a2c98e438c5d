import { requirePermission } from '$lib/server/guard';
import { outboxMessage } from '$lib/server/outbox';
import { refusalAsError } from '$lib/server/refusal';
import type { PageServerLoad } from './$types';

export const load = ((event) => {
	const { scope } = requirePermission(event, 'outbox:read');
	try {
		return { message: outboxMessage(scope, event.params.id) };
	} catch (err) {
		refusalAsError(err);
	}
}) satisfies PageServerLoad;
