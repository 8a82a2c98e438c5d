import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

/*
 * The alignment job's own revision: it records the reference clip and usable span it set
 * beside the placements, so reverting to a revision before the run, or back to the run,
 * restores the timing as a whole. Real database, real ffmpeg, the real job (engine in its
 * child process) on two clips of the fountain-lap fixture.
 */

const dataDir = mkdtempSync(join(tmpdir(), 'lockstep-alignment-edits-'));
process.env.DATABASE_URL = join(dataDir, 'test.db');
process.env.MEDIA_ROOT = join(dataDir, 'media');
afterAll(() => rmSync(dataDir, { recursive: true, force: true }));

type Modules = {
	db: typeof import('./db');
	people: typeof import('./people');
	scope: typeof import('./scope');
	sessions: typeof import('./capture-sessions');
	ingest: typeof import('./ingest');
	handlers: typeof import('./jobs/handlers');
	runner: typeof import('./jobs/runner');
	edits: typeof import('./alignment-edits');
};
let m: Modules;
let scope: InstanceType<Modules['scope']['WorkspaceScope']>;
let editorId: string;
let sessionId: string;

beforeAll(async () => {
	m = {
		db: await import('./db'),
		people: await import('./people'),
		scope: await import('./scope'),
		sessions: await import('./capture-sessions'),
		ingest: await import('./ingest'),
		handlers: await import('./jobs/handlers'),
		runner: await import('./jobs/runner'),
		edits: await import('./alignment-edits')
	};
	m.db.applyMigrations(m.db.db);
	const workspaceId = m.people.upsertWorkspace('studio', 'Studio');
	scope = new m.scope.WorkspaceScope(workspaceId);
	editorId = await m.people.upsertPerson({ email: 'eli@example.test', displayName: 'Eli', password: 'long-enough-pw', workspaceId, role: 'editor' });
	sessionId = m.sessions.createSession(scope, editorId, { name: 'Revert past a run' }).id;
	for (const [file, camera, position] of [['high.mp4', 'High', 'high'], ['mid.mp4', 'Mid', 'mid']] as const) {
		await m.ingest.ingestFile(scope, sessionId, editorId, { path: join('fixtures/fountain-lap', file), originalName: file, placement: 'copy', cameraLabel: camera, cameraPosition: position });
	}
}, 120_000);

const stateOf = () => {
	const { session, clips } = m.edits.workbenchOf(scope, sessionId);
	return {
		referenceClipId: session.referenceClipId,
		usable: [session.usableStartSeconds, session.usableEndSeconds],
		clips: clips.map((c) => ({ label: c.cameraLabel, offsetSeconds: c.offsetSeconds, driftPpm: c.driftPpm, matched: c.matched, syncMethod: c.syncMethod }))
	};
};

describe('the alignment job’s revision', () => {
	it('records the reference and span it set, so a revert to before the run clears them and a revert to the run restores them', async () => {
		// A change by hand before the run: the revision to go back to.
		const high = m.edits.workbenchOf(scope, sessionId).clips.find((c) => c.cameraLabel === 'High')!;
		let version = scope.session(sessionId).version;
		const locked = m.edits.applyAlignmentEdit(scope, sessionId, editorId, { version, edit: { kind: 'lock', clipId: high.id, locked: true } });
		const unlocked = m.edits.applyAlignmentEdit(scope, sessionId, editorId, { version: locked.session.version, edit: { kind: 'lock', clipId: high.id, locked: false } });
		const beforeRun = stateOf();
		expect(beforeRun.referenceClipId).toBeNull();
		expect(beforeRun.usable).toEqual([null, null]);

		m.handlers.registerAnalysisHandlers();
		await m.runner.runJobsUntilIdle();
		const afterRun = stateOf();
		// The run chose a reference, marked the common span usable and placed both clips.
		expect(afterRun.referenceClipId).not.toBeNull();
		expect(afterRun.usable[0]).toEqual(expect.any(Number));
		expect(afterRun.usable[1]! - afterRun.usable[0]!).toBeGreaterThan(60);
		for (const clip of afterRun.clips) expect(clip).toMatchObject({ matched: true, syncMethod: 'audio', offsetSeconds: expect.any(Number) });
		// The workbench's common span (the limit for the usable span) is the engine's, which the run
		// marked usable: both end half a frame after a camera's last frame, not at its media's end.
		const common = m.edits.workbenchOf(scope, sessionId).commonSpan!;
		expect(common.startSeconds).toBeCloseTo(afterRun.usable[0]!, 6);
		expect(common.endSeconds).toBeCloseTo(afterRun.usable[1]!, 6);
		const run = m.edits.workbenchOf(scope, sessionId).revisions.find((r) => r.kind === 'alignment')!;
		expect(run.summary).toBe('aligned by sound (2 clips placed)');

		version = scope.session(sessionId).version;
		const back = m.edits.revertToRevision(scope, sessionId, unlocked.revision.id, editorId, { version });
		expect(stateOf()).toEqual(beforeRun);
		expect(back.revision.summary).toBe(`reverted to version ${unlocked.revision.sessionVersion}`);

		m.edits.revertToRevision(scope, sessionId, run.id, editorId, { version: back.session.version });
		expect(stateOf()).toEqual(afterRun);
	}, 180_000);
});

describe('the workbench’s plain forms', () => {
	const refusalOf = (work: () => unknown) => {
		try {
			work();
		} catch (err) {
			return err instanceof Error ? err.message : String(err);
		}
		return null;
	};

	it('refuse what cannot be read as the change in words, storing nothing', () => {
		const { session, clips } = m.edits.workbenchOf(scope, sessionId);
		const clip = clips.find((c) => c.cameraLabel === 'Mid')!;
		const version = String(session.version);
		const placement = (fields: Record<string, string>) => refusalOf(() => m.edits.applyPlacementForm(scope, sessionId, editorId, { clipId: clip.id, version, ...fields }));
		expect(placement({ offsetSeconds: 'two' })).toBe('Give the offset in seconds as a number, e.g. 2.5.');
		expect(placement({ offsetSeconds: '', driftPpm: '' })).toBe('Mid already has that offset and drift.');
		expect(placement({ version: '', offsetSeconds: '3' })).toBe('Give the session version your change is based on (reload the page).');
		expect(placement({ version: String(session.version - 1), offsetSeconds: '3' })).toMatch(/^Eli .* the session is now at version \d+\. Your change was not saved/);
		expect(refusalOf(() => m.edits.applyLockForm(scope, sessionId, editorId, { clipId: clip.id, version, locked: 'maybe' }))).toBe('Say locked: true or false.');
		expect(refusalOf(() => m.edits.applyUsableSpanForm(scope, sessionId, editorId, { version, startSeconds: '10' }))).toBe('Give the span end in seconds.');
		expect(refusalOf(() => m.edits.revertForm(scope, sessionId, editorId, { version, revisionId: 'no-such-revision' }))).toBe('No such revision of this capture session.');
		expect(m.edits.workbenchOf(scope, sessionId).session.version).toBe(session.version);
	});

	it('apply a typed offset and drift as two changes, the second based on the first', () => {
		const { session, clips } = m.edits.workbenchOf(scope, sessionId);
		const clip = clips.find((c) => c.cameraLabel === 'Mid')!;
		const outcome = m.edits.applyPlacementForm(scope, sessionId, editorId, { clipId: clip.id, version: String(session.version), offsetSeconds: '2.5', driftPpm: '-45', reason: 'typed' });
		expect(outcome.session.version).toBe(session.version + 2);
		const stored = outcome.clips.find((c) => c.id === clip.id)!;
		expect([stored.offsetSeconds, stored.driftPpm, stored.syncMethod]).toEqual([2.5, -45, 'manual']);
		expect(outcome.revisions.slice(0, 2).map((r) => [r.kind, r.reason])).toEqual([
			['drift', 'typed'],
			['offset', 'typed']
		]);
	});
});
