import { error, json } from '@sveltejs/kit';
import { requirePermission } from '$lib/server/guard';
import { retryJob, JobStateError } from '$lib/server/jobs/queue';
import { publicJob } from '$lib/server/jobs/public';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = (event) => {
	const { scope } = requirePermission(event, 'alignment:run');
	try {
		return json({ job: publicJob(retryJob(scope, event.params.id)) });
	} catch (e) {
		if (e instanceof JobStateError) error(409, { code: 'job_state', message: e.message });
		throw e;
	}
};
