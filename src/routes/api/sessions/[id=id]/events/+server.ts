import { requirePermission } from '$lib/server/guard';
import { jobEvents, jobsOfSession, type JobChange } from '$lib/server/jobs/queue';
import { publicJob } from '$lib/server/jobs/public';
import type { RequestHandler } from './$types';

/** Server-sent events: every change to this session's jobs, as it happens. */
export const GET: RequestHandler = (event) => {
	const { scope } = requirePermission(event, 'sessions:read');
	const session = scope.session(event.params.id);
	const encoder = new TextEncoder();
	let cleanup = () => {};

	const stream = new ReadableStream<Uint8Array>({
		start(controller) {
			const send = (name: string, data: unknown) => controller.enqueue(encoder.encode(`event: ${name}\ndata: ${JSON.stringify(data)}\n\n`));
			send('jobs', jobsOfSession(scope, session.id).map(publicJob));
			// ?once=1 answers the snapshot and ends, for scripts that only poll.
			if (event.url.searchParams.has('once')) {
				controller.close();
				return;
			}
			const onChange = ({ job }: JobChange) => {
				if (job.sessionId === session.id && job.workspaceId === scope.workspaceId) send('job', publicJob(job));
			};
			jobEvents.on('change', onChange);
			// A comment line every 20 s keeps proxies from closing an idle stream.
			const heartbeat = setInterval(() => controller.enqueue(encoder.encode(': still here\n\n')), 20_000);
			cleanup = () => {
				jobEvents.off('change', onChange);
				clearInterval(heartbeat);
			};
			event.request.signal.addEventListener('abort', () => {
				cleanup();
				try {
					controller.close();
				} catch {
					// already closed by the client going away
				}
			});
		},
		cancel() {
			cleanup();
		}
	});

	return new Response(stream, {
		headers: { 'content-type': 'text/event-stream', 'cache-control': 'no-cache', connection: 'keep-alive' }
	});
};
