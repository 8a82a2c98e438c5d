import { json } from '@sveltejs/kit';
import { requirePermission } from '$lib/server/guard';
import { jobsOfSession } from '$lib/server/jobs/queue';
import { publicJob } from '$lib/server/jobs/public';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = (event) => {
	const { scope } = requirePermission(event, 'sessions:read');
	const session = scope.session(event.params.id);
	return json({ jobs: jobsOfSession(scope, session.id).map(publicJob) });
};
