import { json } from '@sveltejs/kit';
import { requirePermission } from '$lib/server/guard';
import { importFromRoot } from '$lib/server/import-browse';
import { answer, jsonBody } from '$lib/server/refusal';
import type { RequestHandler } from './$types';

/**
 * Imports files from an import folder into this capture session:
 * { rootId, files: ["relative/path.mp4", …], cameraLabel?, cameraPosition? }.
 * Answers one outcome per file (added, duplicate, or refused with the reason).
 */
export const POST: RequestHandler = async (event) => {
	const { scope, userId } = requirePermission(event, 'clips:write');
	scope.session(event.params.id);
	return json(await answer(async () => importFromRoot(scope, event.params.id, userId, await jsonBody(event))));
};
