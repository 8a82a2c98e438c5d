import { createExport } from '$lib/server/exports';
import { requirePermission } from '$lib/server/guard';
import { answer } from '$lib/server/refusal';
import type { RequestHandler } from './$types';

/**
 * GET ?format=csv|json|otio|script|summary&every=S | count=N | frameOf=<clip id>
 *     [&cameras=<id>,<id>] [&tolerance=<ms>] [&table=instants|clips] [&unapproved=ok]
 * The file itself, recorded as an export (docs/timing-table.md).
 */
export const GET: RequestHandler = async (event) => {
	const allowed = requirePermission(event, 'exports:create');
	const file = await answer(() => createExport(allowed, event.params.id, event.url.searchParams));
	return new Response(file.body, {
		headers: {
			'content-type': file.contentType,
			'content-disposition': `attachment; filename="${file.fileName}"`,
			'cache-control': 'no-store',
			'x-lockstep-export-id': file.id,
			'x-lockstep-sha256': file.sha256
		}
	});
};
