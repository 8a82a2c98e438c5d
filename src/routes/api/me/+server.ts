import { json } from '@sveltejs/kit';
import { requireSignedIn } from '$lib/server/guard';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = (event) => {
	requireSignedIn(event);
	const { user, workspace, role, memberships, apiToken } = event.locals;
	return json({ user, apiToken, workspace, role, memberships });
};
