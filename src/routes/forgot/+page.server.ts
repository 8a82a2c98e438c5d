import { publicOrigin } from '$lib/server/links';
import { RESET_MINUTES, requestPasswordReset } from '$lib/server/password-resets';
import { formFields, formRefusal } from '$lib/server/refusal';
import type { Actions, PageServerLoad } from './$types';

export const load = (() => ({ resetMinutes: RESET_MINUTES })) satisfies PageServerLoad;

export const actions = {
	default: async ({ request, url }) => {
		const fields = formFields(await request.formData());
		try {
			const { email } = requestPasswordReset(fields, publicOrigin(url));
			return { sentTo: email };
		} catch (err) {
			return formRefusal(err, { email: fields.email ?? '' });
		}
	}
} satisfies Actions;
