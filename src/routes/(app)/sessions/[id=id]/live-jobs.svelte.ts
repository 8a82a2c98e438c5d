import type { PublicJob } from '$lib/server/jobs/public';

/** This session's jobs, kept current by server-sent events from /api/sessions/:id/events. */
export class LiveJobs {
	jobs = $state<PublicJob[]>([]);
	connected = $state(false);
	private source: EventSource | null = null;

	constructor(
		initial: PublicJob[],
		private readonly onFinished: (job: PublicJob) => void
	) {
		this.jobs = initial;
	}

	connect(sessionId: string): () => void {
		this.source = new EventSource(`/api/sessions/${sessionId}/events`);
		this.source.addEventListener('open', () => (this.connected = true));
		this.source.addEventListener('error', () => (this.connected = false));
		this.source.addEventListener('jobs', (e) => (this.jobs = JSON.parse((e as MessageEvent<string>).data) as PublicJob[]));
		this.source.addEventListener('job', (e) => {
			const job = JSON.parse((e as MessageEvent<string>).data) as PublicJob;
			const before = this.jobs.find((j) => j.id === job.id);
			this.jobs = before ? this.jobs.map((j) => (j.id === job.id ? job : j)) : [job, ...this.jobs];
			if (before?.state !== job.state && (job.state === 'done' || job.state === 'failed')) this.onFinished(job);
		});
		return () => this.source?.close();
	}

	get active(): PublicJob[] {
		return this.jobs.filter((j) => j.state === 'queued' || j.state === 'running');
	}
}
