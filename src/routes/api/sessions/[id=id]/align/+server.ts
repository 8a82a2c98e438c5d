import { json } from '@sveltejs/kit';
import { requestAlignment } from '$lib/server/alignment';
import { requirePermission } from '$lib/server/guard';
import { publicJob } from '$lib/server/jobs/public';
import { answer } from '$lib/server/refusal';
import type { RequestHandler } from './$types';

/** Starts (or joins) alignment of the session's clips by sound; answers the job. */
export const POST: RequestHandler = async (event) => {
	const { scope, userId } = requirePermission(event, 'alignment:run');
	const jobId = await answer(() => requestAlignment(scope, event.params.id, userId));
	return json({ job: publicJob(scope.job(jobId)) }, { status: 202 });
};
