import { z } from 'zod';
import { listSessions } from '$lib/server/capture-sessions';
import { SESSION_STATUSES } from '$lib/server/db/schema';
import { requirePermission } from '$lib/server/guard';
import type { PageServerLoad } from './$types';

const Filters = z.object({
	q: z.string().trim().max(200).optional(),
	status: z.enum(SESSION_STATUSES).optional().catch(undefined)
});

export const load = ((event) => {
	const { scope } = requirePermission(event, 'sessions:read');
	const filters = Filters.parse(Object.fromEntries(event.url.searchParams));
	return {
		filters: { q: filters.q ?? '', status: filters.status ?? '' },
		sessions: listSessions(scope, { search: filters.q || undefined, status: filters.status })
	};
}) satisfies PageServerLoad;
