import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { ROLE_NAMES } from '$lib/permissions';
import { requirePermission } from '$lib/server/guard';
import { changeRole, removeMember, setActive } from '$lib/server/members';
import { answer, jsonBody, parseInput } from '$lib/server/refusal';
import type { RequestHandler } from './$types';

const MemberChange = z
	.object({
		role: z.enum(ROLE_NAMES, 'role: choose admin, editor, reviewer or processor.').optional(),
		active: z.boolean('active: send true or false.').optional()
	})
	.refine((v) => v.role !== undefined || v.active !== undefined, 'Send "role", "active" or both.');

/** Changes a member's role and/or activates or deactivates their account. */
export const PATCH: RequestHandler = async (event) => {
	const { scope, userId: actingUserId } = requirePermission(event, 'people:manage');
	const member = await answer(async () => {
		const change = parseInput(MemberChange, await jsonBody(event));
		let result = change.role ? changeRole(scope, event.params.id, change.role) : undefined;
		if (change.active !== undefined) result = await setActive(scope, actingUserId, event.params.id, change.active);
		return result;
	});
	return json({ member });
};

/** Removes the person from this workspace; their account and other workspaces stay. */
export const DELETE: RequestHandler = async (event) => {
	const { scope } = requirePermission(event, 'people:manage');
	await answer(() => removeMember(scope, event.params.id));
	return new Response(null, { status: 204 });
};
