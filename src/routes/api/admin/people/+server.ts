import { json } from '@sveltejs/kit';
import { requirePermission } from '$lib/server/guard';
import { listMembers } from '$lib/server/members';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = (event) => {
	const { scope } = requirePermission(event, 'people:manage');
	return json({ members: listMembers(scope) });
};
