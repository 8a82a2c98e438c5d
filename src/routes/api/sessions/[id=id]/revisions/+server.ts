import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { revisionsOfSession } from '$lib/server/alignment-edits';
import { requirePermission } from '$lib/server/guard';
import { answer, parseInput } from '$lib/server/refusal';
import type { RequestHandler } from './$types';

const Query = z.object({ since: z.coerce.number('since must be a session version.').int().min(0).default(0) });

/** Every change of the session's timing, newest first; `?since=<version>` gives only the later ones. */
export const GET: RequestHandler = async (event) => {
	const { scope } = requirePermission(event, 'sessions:read');
	const { since } = await answer(() => parseInput(Query, Object.fromEntries(event.url.searchParams)));
	return json({ revisions: revisionsOfSession(scope, event.params.id, since) });
};
