import { z } from 'zod';
import { requirePermission } from '$lib/server/guard';
import { addImportRoot, listImportRoots, removeImportRoot } from '$lib/server/import-roots';
import { formFields, formRefusal, parseInput } from '$lib/server/refusal';
import type { Actions, PageServerLoad } from './$types';

export const load = ((event) => {
	const { scope } = requirePermission(event, 'imports:manage');
	return { roots: listImportRoots(scope) };
}) satisfies PageServerLoad;

const RootTarget = z.object({ rootId: z.string().min(1, 'Choose an import folder.') });

export const actions = {
	add: async (event) => {
		const { scope } = requirePermission(event, 'imports:manage');
		const fields = formFields(await event.request.formData());
		try {
			const root = await addImportRoot(scope, fields);
			return { action: 'add' as const, done: `“${root.name}” added. Editors can bring clips in from it.` };
		} catch (err) {
			return formRefusal(err, { action: 'add' as const, name: fields.name ?? '', path: fields.path ?? '', mode: fields.mode ?? '' });
		}
	},
	remove: async (event) => {
		const { scope } = requirePermission(event, 'imports:manage');
		const fields = formFields(await event.request.formData());
		try {
			const { rootId } = parseInput(RootTarget, fields);
			removeImportRoot(scope, rootId);
			return { action: 'remove' as const, done: 'Import folder removed. Clips already brought in stay in their sessions.' };
		} catch (err) {
			return formRefusal(err, { action: 'remove' as const, rootId: fields.rootId ?? '' });
		}
	}
} satisfies Actions;
