import { workbenchOf } from '$lib/server/alignment-edits';
import { requirePermission } from '$lib/server/guard';
import { can } from '$lib/permissions';
import type { PageServerLoad } from './$types';

export const load = ((event) => {
	const { scope, role } = requirePermission(event, 'sessions:read');
	return { ...workbenchOf(scope, event.params.id), role, canEdit: can(role, 'alignment:edit') };
}) satisfies PageServerLoad;
