import { z } from 'zod';
import { listSessions } from '$lib/server/capture-sessions';
import { SESSION_STATUSES } from '$lib/server/db/schema';
import { requirePermission } from '$lib/server/guard';
import type { PageServerLoad } from './$types';

const Filters = z.object({
	q: z.string().trim().max(200).optional(),
	status: z.enum(SESSION_STATUSES).optional().catch(undefined),
	from: z.string().regex(/^\d{4}-\d{2}-\d{2}$/).optional().catch(undefined),
	to: z.string().regex(/^\d{4}-\d{2}-\d{2}$/).optional().catch(undefined),
	archived: z.literal('1').optional().catch(undefined)
});

export const load = ((event) => {
	const { scope } = requirePermission(event, 'sessions:read');
	const filters = Filters.parse(Object.fromEntries(event.url.searchParams));
	return {
		filters: { q: filters.q ?? '', status: filters.status ?? '', from: filters.from ?? '', to: filters.to ?? '', archived: !!filters.archived },
		sessions: listSessions(scope, {
			search: filters.q || undefined,
			status: filters.status,
			capturedFrom: filters.from,
			capturedTo: filters.to,
			includeArchived: !!filters.archived
		})
	};
}) satisfies PageServerLoad;
