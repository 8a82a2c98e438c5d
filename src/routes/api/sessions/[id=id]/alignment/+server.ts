import { json } from '@sveltejs/kit';
import { answerEdit, applyAlignmentEdit, workbenchOf } from '$lib/server/alignment-edits';
import { requirePermission } from '$lib/server/guard';
import { answer, jsonBody } from '$lib/server/refusal';
import type { RequestHandler } from './$types';

/** The workbench's state: session, clips with their sync detail, common span and revisions. */
export const GET: RequestHandler = (event) => {
	const { scope } = requirePermission(event, 'sessions:read');
	return json(workbenchOf(scope, event.params.id));
};

/** One change: { version, edit: { kind: offset | drift | reference | lock | usable_span | trim, … } }. */
export const POST: RequestHandler = async (event) => {
	const { scope, userId } = requirePermission(event, 'alignment:edit');
	scope.session(event.params.id);
	const body = await answer(() => jsonBody(event));
	return answerEdit(() => applyAlignmentEdit(scope, event.params.id, userId, body));
};
