import {
	applyLockForm,
	applyPlacementForm,
	applyReferenceForm,
	applyTrimForm,
	applyUsableSpanForm,
	revertForm,
	workbenchOf,
	type EditOutcome
} from '$lib/server/alignment-edits';
import { requirePermission } from '$lib/server/guard';
import { formFields, formRefusal } from '$lib/server/refusal';
import type { WorkspaceScope } from '$lib/server/scope';
import { can } from '$lib/permissions';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

export const load = ((event) => {
	const { scope, role } = requirePermission(event, 'sessions:read');
	return {
		...workbenchOf(scope, event.params.id),
		role,
		canEdit: can(role, 'alignment:edit'),
		// Without JavaScript a lane is chosen by a link (?clip=…), not by a click.
		chosenClipId: event.url.searchParams.get('clip')
	};
}) satisfies PageServerLoad;

type FormEdit = (scope: WorkspaceScope, sessionId: string, userId: string | null, fields: Record<string, string>) => EditOutcome;

/** The workbench's changes as plain form posts: the same server functions as the JSON route, answered for a page. */
function formEdit(apply: FormEdit) {
	return async (event: RequestEvent) => {
		const { scope, userId } = requirePermission(event, 'alignment:edit');
		scope.session(event.params.id);
		const fields = formFields(await event.request.formData());
		try {
			const { revision } = apply(scope, event.params.id, userId, fields);
			return { ...fields, saved: true, message: `Saved (version ${revision.sessionVersion}): ${revision.summary}.` };
		} catch (err) {
			return formRefusal(err, fields);
		}
	};
}

export const actions = {
	placement: formEdit(applyPlacementForm),
	reference: formEdit(applyReferenceForm),
	lock: formEdit(applyLockForm),
	usableSpan: formEdit(applyUsableSpanForm),
	trim: formEdit(applyTrimForm),
	revert: formEdit(revertForm)
} satisfies Actions;
