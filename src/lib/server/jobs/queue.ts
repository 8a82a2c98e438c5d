import { EventEmitter } from 'node:events';
import { and, asc, desc, eq, inArray } from 'drizzle-orm';
import { db } from '../db';
import { analysisJobs, type AnalysisJob } from '../db/schema';
import { newId } from '../ids';
import type { WorkspaceScope } from '../scope';

export type JobKind = AnalysisJob['kind'];

/** Job changes as they happen, for server-sent events and the runner's wake-up. */
export const jobEvents = new EventEmitter();
jobEvents.setMaxListeners(0);

export interface JobChange {
	job: AnalysisJob;
}

export function emitJobChange(jobId: string): void {
	const job = db.select().from(analysisJobs).where(eq(analysisJobs.id, jobId)).get();
	if (job) jobEvents.emit('change', { job } satisfies JobChange);
}

export function enqueueJob(input: {
	workspaceId: string;
	sessionId: string | null;
	clipId?: string | null;
	kind: JobKind;
	params?: unknown;
	requestedBy?: string | null;
}): string {
	const id = newId();
	db.insert(analysisJobs)
		.values({
			id,
			workspaceId: input.workspaceId,
			sessionId: input.sessionId,
			clipId: input.clipId ?? null,
			kind: input.kind,
			paramsJson: input.params === undefined ? null : JSON.stringify(input.params),
			requestedBy: input.requestedBy ?? null,
			message: 'Waiting for its turn'
		})
		.run();
	emitJobChange(id);
	jobEvents.emit('queued');
	return id;
}

/** Unfinished jobs of a kind for a target, so the same work is not queued twice. */
export function pendingJob(kind: JobKind, target: { sessionId?: string; clipId?: string }): AnalysisJob | undefined {
	return db
		.select()
		.from(analysisJobs)
		.where(
			and(
				eq(analysisJobs.kind, kind),
				inArray(analysisJobs.state, ['queued', 'running']),
				target.clipId ? eq(analysisJobs.clipId, target.clipId) : undefined,
				target.sessionId ? eq(analysisJobs.sessionId, target.sessionId) : undefined
			)
		)
		.get();
}

export function jobsOfSession(scope: WorkspaceScope, sessionId: string): AnalysisJob[] {
	return db
		.select()
		.from(analysisJobs)
		.where(scope.where(analysisJobs, eq(analysisJobs.sessionId, sessionId)))
		.orderBy(desc(analysisJobs.createdAt))
		.limit(200)
		.all();
}

export function nextQueuedJob(exceptKinds: JobKind[] = []): AnalysisJob | undefined {
	const queued = db.select().from(analysisJobs).where(eq(analysisJobs.state, 'queued')).orderBy(asc(analysisJobs.createdAt)).all();
	return queued.find((j) => !exceptKinds.includes(j.kind));
}

export class JobStateError extends Error {}

/** Asks a job to stop: a queued job is cancelled at once, a running one at its next checkpoint. */
export function cancelJob(scope: WorkspaceScope, jobId: string): AnalysisJob {
	const job = scope.job(jobId);
	if (job.state === 'queued') {
		db.update(analysisJobs)
			.set({ state: 'cancelled', message: 'Cancelled before it started', finishedAt: new Date() })
			.where(eq(analysisJobs.id, jobId))
			.run();
	} else if (job.state === 'running') {
		db.update(analysisJobs).set({ cancelRequested: true, message: 'Stopping…' }).where(eq(analysisJobs.id, jobId)).run();
		jobEvents.emit('cancel', jobId);
	} else {
		throw new JobStateError(`This job is already ${job.state}; only queued or running jobs can be cancelled.`);
	}
	emitJobChange(jobId);
	return scope.job(jobId);
}

/** Puts a failed or cancelled job back in the queue. */
export function retryJob(scope: WorkspaceScope, jobId: string): AnalysisJob {
	const job = scope.job(jobId);
	if (job.state !== 'failed' && job.state !== 'cancelled') {
		throw new JobStateError(`This job is ${job.state}; only failed or cancelled jobs can be retried.`);
	}
	db.update(analysisJobs)
		.set({ state: 'queued', progress: 0, cancelRequested: false, message: 'Queued again', finishedAt: null, startedAt: null })
		.where(eq(analysisJobs.id, jobId))
		.run();
	emitJobChange(jobId);
	jobEvents.emit('queued');
	return scope.job(jobId);
}
