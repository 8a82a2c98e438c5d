import { json } from '@sveltejs/kit';
import { requirePermission } from '$lib/server/guard';
import { importRootSummaries } from '$lib/server/import-browse';
import type { RequestHandler } from './$types';

/** The import folders of this workspace an editor may browse: id, name and mode (reference or copy). */
export const GET: RequestHandler = (event) => {
	const { scope } = requirePermission(event, 'imports:browse');
	return json({ roots: importRootSummaries(scope) });
};
