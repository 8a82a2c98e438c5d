import { json } from '@sveltejs/kit';
import { requirePermission } from '$lib/server/guard';
import { addImportRoot, listImportRoots } from '$lib/server/import-roots';
import { answer, jsonBody } from '$lib/server/refusal';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = (event) => {
	const { scope } = requirePermission(event, 'imports:manage');
	return json({ roots: listImportRoots(scope) });
};

/** Names a server folder { name, path, mode: "reference" | "copy" } as an import root. */
export const POST: RequestHandler = async (event) => {
	const { scope } = requirePermission(event, 'imports:manage');
	const root = await answer(async () => addImportRoot(scope, await jsonBody(event)));
	return json({ root }, { status: 201 });
};
