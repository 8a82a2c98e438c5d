import { redirect } from '@sveltejs/kit';
import { lucia } from '$lib/server/auth';
import type { RequestHandler } from './$types';

// Sign-out is POST only: a link or an image tag must never end someone's session.
export const POST: RequestHandler = async ({ locals, cookies }) => {
	if (locals.session) await lucia.invalidateSession(locals.session.id);
	const blank = lucia.createBlankSessionCookie();
	cookies.set(blank.name, blank.value, { path: '.', ...blank.attributes });
	redirect(303, '/login?signedOut=1');
};
