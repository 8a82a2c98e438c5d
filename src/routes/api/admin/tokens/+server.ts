import { json } from '@sveltejs/kit';
import { requirePermission } from '$lib/server/guard';
import { answer, jsonBody } from '$lib/server/refusal';
import { createToken, listTokens } from '$lib/server/token-admin';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = (event) => {
	const { scope } = requirePermission(event, 'tokens:manage');
	return json({ tokens: listTokens(scope) });
};

/** Creates { name, role }; the answer carries the secret, the only time it is ever shown. */
export const POST: RequestHandler = async (event) => {
	const { scope, userId } = requirePermission(event, 'tokens:manage');
	const created = await answer(async () => createToken(scope, await jsonBody(event), userId));
	return json(created, { status: 201 });
};
