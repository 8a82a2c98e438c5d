import { json } from '@sveltejs/kit';
import { requirePermission } from '$lib/server/guard';
import { answer } from '$lib/server/refusal';
import { instantPickOf, reviewInstants, reviewOf } from '$lib/server/review';
import type { RequestHandler } from './$types';

/** The session's review: status, approval, spot checks, decisions; `?count=N` or `?at=<seconds>` adds instants to check. */
export const GET: RequestHandler = async (event) => {
	const { scope } = requirePermission(event, 'sessions:read');
	const review = reviewOf(scope, event.params.id);
	const instants = await answer(async () => {
		const pick = instantPickOf(event.url.searchParams);
		return pick ? reviewInstants(scope, event.params.id, pick) : null;
	});
	return json({ ...review, instants });
};
