import { fail } from '@sveltejs/kit';
import { activityOfSession } from '$lib/server/activity';
import { requestAlignment } from '$lib/server/alignment';
import { editSession, sessionWithClips, setArchived, VersionConflict } from '$lib/server/capture-sessions';
import { editClip, publicClip } from '$lib/server/clips';
import { requirePermission } from '$lib/server/guard';
import { cancelJob, JobStateError, jobsOfSession, retryJob } from '$lib/server/jobs/queue';
import { publicJob } from '$lib/server/jobs/public';
import { formFields, Refusal } from '$lib/server/refusal';
import { SessionEditFields } from '$lib/validation/session';
import type { Actions, PageServerLoad } from './$types';

export const load = ((event) => {
	const { scope } = requirePermission(event, 'sessions:read');
	const { session, clips } = sessionWithClips(scope, event.params.id);
	return {
		session,
		clips: clips.map(publicClip),
		jobs: jobsOfSession(scope, session.id).map(publicJob),
		activity: activityOfSession(scope, session.id)
	};
}) satisfies PageServerLoad;

function refused(e: unknown) {
	if (e instanceof Refusal) return fail(e.status, { message: e.message });
	if (e instanceof JobStateError) return fail(409, { message: e.message });
	throw e;
}

export const actions = {
	edit: async (event) => {
		const { scope } = requirePermission(event, 'sessions:write');
		scope.session(event.params.id);
		const fields = formFields(await event.request.formData());
		const parsed = SessionEditFields.safeParse({ ...fields, version: Number(fields.version) });
		if (!parsed.success) return fail(400, { message: parsed.error.issues[0].message });
		const { version, ...edit } = parsed.data;
		try {
			editSession(scope, event.params.id, version, edit);
			return { saved: 'Details saved.' };
		} catch (e) {
			if (e instanceof VersionConflict) return fail(409, { message: e.message });
			throw e;
		}
	},
	align: async (event) => {
		const { scope, userId } = requirePermission(event, 'alignment:run');
		try {
			requestAlignment(scope, event.params.id, userId);
			return { saved: 'Alignment queued.' };
		} catch (e) {
			return refused(e);
		}
	},
	clip: async (event) => {
		const { scope, userId } = requirePermission(event, 'clips:write');
		scope.session(event.params.id);
		const fields = formFields(await event.request.formData());
		if (!fields.clipId) return fail(400, { message: 'Choose the clip to change.' });
		const clip = scope.clip(fields.clipId);
		try {
			editClip(scope, clip.id, userId, {
				cameraLabel: fields.cameraLabel,
				cameraPosition: fields.cameraPosition,
				included: fields.included === undefined ? undefined : fields.included === 'on' || fields.included === 'true'
			});
			return { saved: `Saved ${fields.cameraLabel ?? clip.cameraLabel}.` };
		} catch (e) {
			return refused(e);
		}
	},
	cancelJob: async (event) => {
		const { scope } = requirePermission(event, 'alignment:run');
		scope.session(event.params.id);
		const fields = formFields(await event.request.formData());
		if (!fields.jobId) return fail(400, { message: 'Choose the job to cancel.' });
		try {
			cancelJob(scope, fields.jobId);
			return { saved: 'Cancelling the job.' };
		} catch (e) {
			return refused(e);
		}
	},
	retryJob: async (event) => {
		const { scope } = requirePermission(event, 'alignment:run');
		scope.session(event.params.id);
		const fields = formFields(await event.request.formData());
		if (!fields.jobId) return fail(400, { message: 'Choose the job to retry.' });
		try {
			retryJob(scope, fields.jobId);
			return { saved: 'Job queued again.' };
		} catch (e) {
			return refused(e);
		}
	},
	archive: async (event) => {
		const { scope } = requirePermission(event, 'sessions:write');
		scope.session(event.params.id);
		const fields = formFields(await event.request.formData());
		const session = setArchived(scope, event.params.id, fields.archived !== 'false');
		return { saved: session.archivedAt ? 'Session archived: it no longer shows in the list.' : 'Session restored to the list.' };
	}
} satisfies Actions;
