import type { LayoutServerLoad } from './$types';

export const load = (({ locals }) => ({
	user: locals.user,
	workspace: locals.workspace,
	role: locals.role,
	memberships: locals.memberships
})) satisfies LayoutServerLoad;
