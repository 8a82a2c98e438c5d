import { fail, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { signIn } from '$lib/server/sign-in';
import type { Actions, PageServerLoad } from './$types';

export const load = (({ locals, url }) => {
	if (locals.user) redirect(303, safeNext(url.searchParams.get('next')));
	return { signedOut: url.searchParams.has('signedOut'), passwordSet: url.searchParams.has('passwordSet') };
}) satisfies PageServerLoad;

const SignInForm = z.object({
	email: z.string().trim().min(1, 'Enter your e-mail address.').email('That is not an e-mail address.'),
	password: z.string().min(1, 'Enter your password.')
});

export const actions = {
	default: async ({ request, cookies, getClientAddress, setHeaders, url }) => {
		const form = Object.fromEntries(await request.formData());
		const parsed = SignInForm.safeParse(form);
		const email = typeof form.email === 'string' ? form.email : '';
		if (!parsed.success) return fail(400, { email, message: parsed.error.issues[0].message });

		const outcome = await signIn(parsed.data.email, parsed.data.password, getClientAddress());
		if (outcome.kind === 'throttled') {
			setHeaders({ 'retry-after': String(outcome.retryAfterSeconds) });
			const minutes = Math.ceil(outcome.retryAfterSeconds / 60);
			return fail(429, {
				email,
				message: `Too many failed sign-ins. Try again in ${minutes} minute${minutes === 1 ? '' : 's'}, or reset your password.`
			});
		}
		if (outcome.kind === 'invalid') {
			return fail(400, { email, message: 'That e-mail address and password do not match an active account.' });
		}
		const { name, value, attributes } = outcome.sessionCookie;
		cookies.set(name, value, { path: '.', ...attributes });
		redirect(303, safeNext(url.searchParams.get('next')));
	}
} satisfies Actions;

/** Only same-site paths: an open redirect after sign-in would be a phishing aid. */
function safeNext(next: string | null): string {
	return next && next.startsWith('/') && !next.startsWith('//') ? next : '/sessions';
}
