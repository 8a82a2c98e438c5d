import { requirePermission } from '$lib/server/guard';
import { answer } from '$lib/server/refusal';
import { revokeToken } from '$lib/server/token-admin';
import type { RequestHandler } from './$types';

export const DELETE: RequestHandler = async (event) => {
	const { scope } = requirePermission(event, 'tokens:manage');
	await answer(() => revokeToken(scope, event.params.id));
	return new Response(null, { status: 204 });
};
