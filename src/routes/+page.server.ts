import { redirect } from '@sveltejs/kit';
import type { PageServerLoad } from './$types';

export const load = (({ locals }) => {
	redirect(303, locals.user ? '/sessions' : '/login');
}) satisfies PageServerLoad;
