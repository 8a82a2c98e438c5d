import { Refusal } from './refusal';
import { alignableClips } from './ingest';
import { enqueueJob, pendingJob } from './jobs/queue';
import { recordActivity } from './activity';
import type { WorkspaceScope } from './scope';

/** Queues alignment of a session's clips by sound, once: a second request joins the first. */
export function requestAlignment(scope: WorkspaceScope, sessionId: string, userId: string | null): string {
	const session = scope.session(sessionId);
	const pending = pendingJob('align', { sessionId: session.id });
	if (pending) return pending.id;
	const ready = alignableClips(scope, session.id);
	if (ready.length < 2) {
		throw new Refusal(
			'not_enough_clips',
			'Alignment needs at least two probed clips with sound in this session; add clips or wait for probing to finish.',
			409
		);
	}
	const jobId = enqueueJob({ workspaceId: scope.workspaceId, sessionId: session.id, kind: 'align', requestedBy: userId });
	recordActivity(scope, { sessionId: session.id, userId, kind: 'align_requested', message: `asked to align ${ready.length} clips` });
	return jobId;
}
