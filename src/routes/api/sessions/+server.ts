import { error, json } from '@sveltejs/kit';
import { z } from 'zod';
import { createSession, listSessions } from '$lib/server/capture-sessions';
import { SESSION_STATUSES } from '$lib/server/db/schema';
import { requirePermission } from '$lib/server/guard';
import { SessionFields } from '$lib/validation/session';
import type { RequestHandler } from './$types';

const ListQuery = z.object({ q: z.string().trim().max(200).optional(), status: z.enum(SESSION_STATUSES).optional() });

export const GET: RequestHandler = (event) => {
	const { scope } = requirePermission(event, 'sessions:read');
	const query = ListQuery.safeParse(Object.fromEntries(event.url.searchParams));
	if (!query.success) error(400, { code: 'invalid_input', message: query.error.issues[0].message });
	return json({ sessions: listSessions(scope, { search: query.data.q, status: query.data.status }) });
};

export const POST: RequestHandler = async (event) => {
	const { scope, userId } = requirePermission(event, 'sessions:write');
	const body: unknown = await event.request.json().catch(() => null);
	const parsed = SessionFields.safeParse(body);
	if (!parsed.success) {
		const issue = parsed.error.issues[0];
		error(400, { code: 'invalid_input', message: `${issue.path.join('.') || 'body'}: ${issue.message}` });
	}
	return json({ session: createSession(scope, userId, parsed.data) }, { status: 201 });
};
