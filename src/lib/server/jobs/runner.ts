import { eq } from 'drizzle-orm';
import { db } from '../db';
import { analysisJobs, type AnalysisJob } from '../db/schema';
import { emitJobChange, jobEvents, nextQueuedJob, type JobKind } from './queue';

/*
 * Runs analysis jobs off the request path, one process-wide loop. Jobs live in SQLite, so
 * a restart finds them again: queued ones simply wait, and ones that were running when the
 * process died are queued again (their handlers write results in one transaction with the
 * job's completion, so a re-run never leaves duplicates).
 */

export interface JobContext {
	job: AnalysisJob;
	signal: AbortSignal;
	progress(fraction: number, message?: string): void;
	/** Marks the job done; handlers call it inside the transaction that stores their result. */
	complete(message: string, result?: unknown): void;
}

export type JobHandler = (context: JobContext) => Promise<void>;

/** A failure whose message is meant for the people who see the job. */
export class JobFailure extends Error {}

const MAX_ATTEMPTS = 3;
const MAX_RUNNING = 2;
const handlers = new Map<JobKind, JobHandler>();
const running = new Map<string, { kind: JobKind; abort: AbortController }>();
let started = false;
let pumping = false;

export function registerJobHandler(kind: JobKind, handler: JobHandler): void {
	handlers.set(kind, handler);
}

export function startJobRunner(): void {
	if (started) return;
	started = true;
	const interrupted = db.select().from(analysisJobs).where(eq(analysisJobs.state, 'running')).all();
	for (const job of interrupted) {
		db.update(analysisJobs)
			.set({ state: 'queued', progress: 0, message: 'Interrupted by a server restart; queued again' })
			.where(eq(analysisJobs.id, job.id))
			.run();
	}
	if (interrupted.length) console.log(`Jobs: ${interrupted.length} interrupted job(s) queued again`);
	jobEvents.on('queued', () => void pump());
	jobEvents.on('cancel', (jobId: string) => running.get(jobId)?.abort.abort());
	setInterval(() => void pump(), 2000).unref();
	void pump();
}

async function pump(): Promise<void> {
	if (pumping) return;
	pumping = true;
	try {
		while (running.size < MAX_RUNNING) {
			// Alignment uses every core; let one run at a time.
			const busyKinds: JobKind[] = [...running.values()].some((r) => r.kind === 'align') ? ['align'] : [];
			const job = nextQueuedJob(busyKinds);
			if (!job) break;
			const claimed = db
				.update(analysisJobs)
				.set({ state: 'running', startedAt: new Date(), attempts: job.attempts + 1, message: 'Starting' })
				.where(eq(analysisJobs.id, job.id))
				.run();
			if (claimed.changes === 0) continue;
			const abort = new AbortController();
			running.set(job.id, { kind: job.kind, abort });
			emitJobChange(job.id);
			void execute({ ...job, attempts: job.attempts + 1 }, abort).finally(() => {
				running.delete(job.id);
				void pump();
			});
		}
	} finally {
		pumping = false;
	}
}

async function execute(job: AnalysisJob, abort: AbortController): Promise<void> {
	const handler = handlers.get(job.kind);
	let completed = false;
	let lastEmit = 0;
	const context: JobContext = {
		job,
		signal: abort.signal,
		progress(fraction, message) {
			const now = Date.now();
			db.update(analysisJobs)
				.set({ progress: Math.max(0, Math.min(1, fraction)), ...(message ? { message } : {}) })
				.where(eq(analysisJobs.id, job.id))
				.run();
			if (now - lastEmit > 150 || fraction >= 1) {
				lastEmit = now;
				emitJobChange(job.id);
			}
		},
		complete(message, result) {
			completed = true;
			db.update(analysisJobs)
				.set({
					state: 'done',
					progress: 1,
					message,
					resultJson: result === undefined ? null : JSON.stringify(result),
					finishedAt: new Date()
				})
				.where(eq(analysisJobs.id, job.id))
				.run();
		}
	};
	try {
		if (!handler) throw new JobFailure(`No handler for ${job.kind} jobs in this server.`);
		await handler(context);
		if (!completed) context.complete('Done');
	} catch (error) {
		const cancelled = abort.signal.aborted;
		const message = cancelled
			? 'Cancelled'
			: error instanceof JobFailure
				? error.message
				: 'The job failed on the server; retry it, and if it fails again the server log has the details.';
		if (!cancelled && !(error instanceof JobFailure)) console.error(`Job ${job.id} (${job.kind}) failed:`, error);
		const giveUp = cancelled || error instanceof JobFailure || job.attempts >= MAX_ATTEMPTS;
		db.update(analysisJobs)
			.set({
				state: cancelled ? 'cancelled' : giveUp ? 'failed' : 'queued',
				message: giveUp ? message : `${message} (attempt ${job.attempts} of ${MAX_ATTEMPTS}; trying again)`,
				finishedAt: giveUp ? new Date() : null,
				cancelRequested: false
			})
			.where(eq(analysisJobs.id, job.id))
			.run();
	}
	emitJobChange(job.id);
}

/** Jobs now running in this process (for tests and the shutdown log). */
export function runningJobIds(): string[] {
	return [...running.keys()];
}

/** For scripts (the demo seed): runs jobs until none is queued or running, then returns. */
export async function runJobsUntilIdle(timeoutMs = 10 * 60_000): Promise<void> {
	startJobRunner();
	const deadline = Date.now() + timeoutMs;
	for (;;) {
		const open = db.select({ id: analysisJobs.id, state: analysisJobs.state }).from(analysisJobs).all();
		if (!open.some((j) => j.state === 'queued' || j.state === 'running') && running.size === 0) return;
		if (Date.now() > deadline) throw new Error('Jobs did not finish in time.');
		await new Promise((r) => setTimeout(r, 200));
	}
}
