import { json } from '@sveltejs/kit';
import { requirePermission } from '$lib/server/guard';
import { publicOrigin } from '$lib/server/links';
import { answer, jsonBody } from '$lib/server/refusal';
import { actorOf, decideReview } from '$lib/server/review';
import type { RequestHandler } from './$types';

/** Reviewer: approve, or send back with notes. Body: { version, decision: "approve" | "send_back", note }. */
export const POST: RequestHandler = async (event) => {
	const { scope, userId } = requirePermission(event, 'review:decide');
	scope.session(event.params.id);
	return json(await answer(async () => decideReview(scope, event.params.id, actorOf(userId), await jsonBody(event), publicOrigin(event.url))));
};
