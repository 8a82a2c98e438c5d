import { fail } from '@sveltejs/kit';
import { editSession, sessionWithClips, VersionConflict } from '$lib/server/capture-sessions';
import { requirePermission } from '$lib/server/guard';
import { SessionEditFields } from '$lib/validation/session';
import type { Actions, PageServerLoad } from './$types';

export const load = ((event) => {
	const { scope } = requirePermission(event, 'sessions:read');
	return sessionWithClips(scope, event.params.id);
}) satisfies PageServerLoad;

export const actions = {
	edit: async (event) => {
		const { scope } = requirePermission(event, 'sessions:write');
		scope.session(event.params.id);
		const fields = Object.fromEntries(await event.request.formData());
		const parsed = SessionEditFields.safeParse({ ...fields, version: Number(fields.version) });
		if (!parsed.success) return fail(400, { message: parsed.error.issues[0].message });
		const { version, ...edit } = parsed.data;
		try {
			editSession(scope, event.params.id, version, edit);
			return { saved: true };
		} catch (e) {
			if (e instanceof VersionConflict) return fail(409, { message: e.message });
			throw e;
		}
	}
} satisfies Actions;
