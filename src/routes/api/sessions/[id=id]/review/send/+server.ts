import { json } from '@sveltejs/kit';
import { requirePermission } from '$lib/server/guard';
import { publicOrigin } from '$lib/server/links';
import { answer, jsonBody } from '$lib/server/refusal';
import { actorOf, sendForReview } from '$lib/server/review';
import type { RequestHandler } from './$types';

/** Editor: an aligned session goes to review. Body: { version, note? }. */
export const POST: RequestHandler = async (event) => {
	const { scope, userId } = requirePermission(event, 'review:send');
	scope.session(event.params.id);
	return json(await answer(async () => sendForReview(scope, event.params.id, actorOf(userId), await jsonBody(event), publicOrigin(event.url))));
};
