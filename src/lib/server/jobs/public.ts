import type { AnalysisJob } from '../db/schema';

/** A job as pages and the API show it. */
export function publicJob(job: AnalysisJob) {
	return {
		id: job.id,
		kind: job.kind,
		state: job.state,
		progress: job.progress,
		message: job.message,
		attempts: job.attempts,
		sessionId: job.sessionId,
		clipId: job.clipId,
		createdAt: job.createdAt.getTime(),
		startedAt: job.startedAt?.getTime() ?? null,
		finishedAt: job.finishedAt?.getTime() ?? null
	};
}
export type PublicJob = ReturnType<typeof publicJob>;
