import { json } from '@sveltejs/kit';
import { requirePermission } from '$lib/server/guard';
import { answer, parseInput } from '$lib/server/refusal';
import { MarkQuery, markedEventOf } from '$lib/server/review';
import type { RequestHandler } from './$types';

/** The offsets one visible event implies: `?mark=<clipId>:<frame>` once per camera (two or more). */
export const GET: RequestHandler = async (event) => {
	const { scope } = requirePermission(event, 'sessions:read');
	scope.session(event.params.id);
	return json(
		await answer(async () => {
			const marks = parseInput(MarkQuery, event.url.searchParams.getAll('mark'));
			return { estimate: await markedEventOf(scope, event.params.id, marks) };
		})
	);
};
