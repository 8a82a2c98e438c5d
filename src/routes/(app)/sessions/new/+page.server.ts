import { fail, redirect } from '@sveltejs/kit';
import { createSession } from '$lib/server/capture-sessions';
import { requirePermission } from '$lib/server/guard';
import { formFields } from '$lib/server/refusal';
import { SessionFields } from '$lib/validation/session';
import type { Actions, PageServerLoad } from './$types';

export const load = ((event) => {
	requirePermission(event, 'sessions:write');
	return {};
}) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		const { scope, userId } = requirePermission(event, 'sessions:write');
		const fields = formFields(await event.request.formData());
		const parsed = SessionFields.safeParse(fields);
		if (!parsed.success) {
			const issue = parsed.error.issues[0];
			return fail(400, { fields, field: String(issue.path[0] ?? ''), message: issue.message });
		}
		const session = createSession(scope, userId, parsed.data);
		redirect(303, `/sessions/${session.id}`);
	}
} satisfies Actions;

