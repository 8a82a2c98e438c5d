import { error, redirect } from '@sveltejs/kit';
import { WORKSPACE_COOKIE } from '$lib/server/workspaces';
import { requireSignedIn } from '$lib/server/guard';
import type { RequestHandler } from './$types';

/** Switches the current workspace; only to one the person belongs to. */
export const POST: RequestHandler = async (event) => {
	requireSignedIn(event);
	const form = await event.request.formData();
	const workspaceId = String(form.get('workspaceId') ?? '');
	if (!event.locals.memberships.some((m) => m.workspaceId === workspaceId)) {
		error(403, { code: 'forbidden', message: 'You are not a member of that workspace.' });
	}
	event.cookies.set(WORKSPACE_COOKIE, workspaceId, { path: '/', httpOnly: true, sameSite: 'lax', maxAge: 60 * 60 * 24 * 365 });
	redirect(303, '/sessions');
};
