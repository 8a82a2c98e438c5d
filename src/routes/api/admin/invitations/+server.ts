import { json } from '@sveltejs/kit';
import { requirePermission } from '$lib/server/guard';
import { invitePerson, listPendingInvitations } from '$lib/server/invitations';
import { publicOrigin } from '$lib/server/links';
import { answer, jsonBody } from '$lib/server/refusal';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = (event) => {
	const { scope } = requirePermission(event, 'people:manage');
	return json({ invitations: listPendingInvitations(scope) });
};

/** Invites { email, role } and mails the link; the link itself is never returned. */
export const POST: RequestHandler = async (event) => {
	const { scope, userId } = requirePermission(event, 'people:manage');
	const invitation = await answer(async () => invitePerson(scope, await jsonBody(event), { userId, origin: publicOrigin(event.url) }));
	return json({ invitation }, { status: 201 });
};
