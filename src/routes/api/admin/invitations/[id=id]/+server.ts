import { requirePermission } from '$lib/server/guard';
import { withdrawInvitation } from '$lib/server/invitations';
import { answer } from '$lib/server/refusal';
import type { RequestHandler } from './$types';

export const DELETE: RequestHandler = async (event) => {
	const { scope } = requirePermission(event, 'people:manage');
	await answer(() => withdrawInvitation(scope, event.params.id));
	return new Response(null, { status: 204 });
};
