import { answerEdit, revertToRevision } from '$lib/server/alignment-edits';
import { requirePermission } from '$lib/server/guard';
import { answer, jsonBody } from '$lib/server/refusal';
import type { RequestHandler } from './$types';

/** Restores the timing as it stood after this revision, as a new revision: { version, reason? }. */
export const POST: RequestHandler = async (event) => {
	const { scope, userId } = requirePermission(event, 'alignment:edit');
	scope.session(event.params.id);
	const body = await answer(() => jsonBody(event));
	return answerEdit(() => revertToRevision(scope, event.params.id, event.params.revision, userId, body));
};
