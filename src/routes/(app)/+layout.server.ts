import { requireSignedIn } from '$lib/server/guard';
import type { LayoutServerLoad } from './$types';

export const load = ((event) => {
	requireSignedIn(event);
	return {};
}) satisfies LayoutServerLoad;
