import { error, redirect } from '@sveltejs/kit';
import { completePasswordReset, lookupPasswordReset } from '$lib/server/password-resets';
import { PASSWORD_RULE } from '$lib/server/passwords';
import { formRefusal, formFields } from '$lib/server/refusal';
import type { Actions, PageServerLoad } from './$types';

export const load = (({ params }) => {
	const reset = lookupPasswordReset(params.token);
	if (reset.state === 'unknown') error(404, { code: 'reset_unknown', message: 'This password reset link is not valid.' });
	if (reset.state === 'expired') error(410, { code: 'reset_expired', message: 'This password reset link has expired.' });
	if (reset.state === 'used') error(410, { code: 'reset_used', message: 'This password reset link has already been used.' });
	return { email: reset.email, expiresAt: reset.expiresAt, passwordRule: PASSWORD_RULE };
}) satisfies PageServerLoad;

export const actions = {
	default: async ({ params, request }) => {
		const fields = formFields(await request.formData());
		try {
			await completePasswordReset(params.token, fields);
		} catch (err) {
			return formRefusal(err, {});
		}
		redirect(303, '/login?passwordSet=1');
	}
} satisfies Actions;
