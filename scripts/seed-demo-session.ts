/*
 * The demo capture session of DESIGN.md, "Market Square fountain, lap 2": the three clips of
 * the generated fountain-lap fixture, brought in, probed and aligned by the real jobs.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { and, eq } from 'drizzle-orm';
import { createSession } from '../src/lib/server/capture-sessions';
import { db } from '../src/lib/server/db/index';
import { analysisJobs, captureSessions, type CameraPosition } from '../src/lib/server/db/schema';
import { ingestFile } from '../src/lib/server/ingest';
import { registerAnalysisHandlers } from '../src/lib/server/jobs/handlers';
import { runJobsUntilIdle } from '../src/lib/server/jobs/runner';
import { WorkspaceScope } from '../src/lib/server/scope';

export const DEMO_SESSION_NAME = 'Market Square fountain, lap 2';
const FIXTURE = 'fixtures/fountain-lap';

interface TruthClip {
	file: string;
	camera: string;
	position: CameraPosition;
}

export async function seedDemoSession(workspaceId: string, editorId: string): Promise<string> {
	const scope = new WorkspaceScope(workspaceId);
	const existing = db
		.select()
		.from(captureSessions)
		.where(and(eq(captureSessions.workspaceId, workspaceId), eq(captureSessions.name, DEMO_SESSION_NAME)))
		.get();
	if (existing) return existing.id;

	const session = createSession(scope, editorId, {
		name: DEMO_SESSION_NAME,
		site: 'Market Square, Wrenfield',
		captureDate: '2026-11-14',
		rigNotes:
			'Pole rig, 2.4 m: high camera 59.94 fps at the top, mid 50 fps at shoulder height, low 30 fps in a waterproof housing near the ground.\nWalked twice round the fountain, about 80 s a lap; slate clap before the first lap.'
	});
	const truth = JSON.parse(readFileSync(join(FIXTURE, 'truth.json'), 'utf8')) as { clips: TruthClip[] };
	for (const clip of truth.clips) {
		const outcome = await ingestFile(scope, session.id, editorId, {
			path: join(FIXTURE, clip.file),
			originalName: `fountain-lap2-${clip.file}`,
			placement: 'copy',
			cameraLabel: clip.camera,
			cameraPosition: clip.position
		});
		console.log(`  ${outcome.kind}: ${outcome.clip.originalName}`);
	}
	registerAnalysisHandlers();
	await runJobsUntilIdle();
	const failed = db.select().from(analysisJobs).where(and(eq(analysisJobs.sessionId, session.id), eq(analysisJobs.state, 'failed'))).all();
	for (const job of failed) console.warn(`  ${job.kind} job failed: ${job.message}`);
	return session.id;
}
