import { json } from '@sveltejs/kit';
import { requirePermission } from '$lib/server/guard';
import { answer, jsonBody } from '$lib/server/refusal';
import { actorOf, recordSpotCheck } from '$lib/server/review';
import type { RequestHandler } from './$types';

/** Reviewer: one spot check. Body: { version, instantSeconds, verdict, offByFrames?, note?, marks? } (marks: the same visible event in two or more cameras). */
export const POST: RequestHandler = async (event) => {
	const { scope, userId } = requirePermission(event, 'review:check');
	scope.session(event.params.id);
	const check = await answer(async () => recordSpotCheck(scope, event.params.id, actorOf(userId), await jsonBody(event)));
	return json({ spotCheck: check }, { status: 201 });
};
