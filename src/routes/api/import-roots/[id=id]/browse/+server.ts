import { json } from '@sveltejs/kit';
import { requirePermission } from '$lib/server/guard';
import { browseImportRoot } from '$lib/server/import-browse';
import { answer } from '$lib/server/refusal';
import type { RequestHandler } from './$types';

/** One folder of an import root: ?path=relative/folder (empty for the root itself). */
export const GET: RequestHandler = async (event) => {
	const { scope } = requirePermission(event, 'imports:browse');
	const path = event.url.searchParams.get('path') ?? '';
	return json(await answer(() => browseImportRoot(scope, event.params.id, path)));
};
