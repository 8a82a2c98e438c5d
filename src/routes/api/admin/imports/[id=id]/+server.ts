import { requirePermission } from '$lib/server/guard';
import { removeImportRoot } from '$lib/server/import-roots';
import { answer } from '$lib/server/refusal';
import type { RequestHandler } from './$types';

export const DELETE: RequestHandler = async (event) => {
	const { scope } = requirePermission(event, 'imports:manage');
	await answer(() => removeImportRoot(scope, event.params.id));
	return new Response(null, { status: 204 });
};
