import { error, json } from '@sveltejs/kit';
import { editSession, sessionWithClips, VersionConflict } from '$lib/server/capture-sessions';
import { publicClip } from '$lib/server/clips';
import { requirePermission } from '$lib/server/guard';
import { SessionEditFields } from '$lib/validation/session';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = (event) => {
	const { scope } = requirePermission(event, 'sessions:read');
	const { session, clips } = sessionWithClips(scope, event.params.id);
	return json({ session, clips: clips.map(publicClip) });
};

export const PATCH: RequestHandler = async (event) => {
	const { scope } = requirePermission(event, 'sessions:write');
	scope.session(event.params.id);
	const body: unknown = await event.request.json().catch(() => null);
	const parsed = SessionEditFields.safeParse(body);
	if (!parsed.success) {
		const issue = parsed.error.issues[0];
		error(400, { code: 'invalid_input', message: `${issue.path.join('.') || 'body'}: ${issue.message}` });
	}
	const { version, ...edit } = parsed.data;
	try {
		return json({ session: editSession(scope, event.params.id, version, edit) });
	} catch (e) {
		if (e instanceof VersionConflict) error(409, { code: 'version_conflict', message: e.message });
		throw e;
	}
};
