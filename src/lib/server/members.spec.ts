import { mkdtempSync, mkdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';

/*
 * The workspace rules that must hold whatever page or API calls them: a workspace
 * keeps an active admin, deactivation never reaches into another workspace, and
 * import folders stay out of Lockstep's own data. Runs against a throwaway database.
 */

const dataDir = mkdtempSync(join(tmpdir(), 'lockstep-members-'));
process.env.DATABASE_URL = join(dataDir, 'test.db');
process.env.MEDIA_ROOT = join(dataDir, 'media');

type Modules = {
	members: typeof import('./members');
	people: typeof import('./people');
	roots: typeof import('./import-roots');
	scope: typeof import('./scope');
	db: typeof import('./db');
	refusal: typeof import('./refusal');
};
let m: Modules;
let studio: InstanceType<Modules['scope']['WorkspaceScope']>;
const ids: Record<string, string> = {};

beforeAll(async () => {
	m = {
		db: await import('./db'),
		members: await import('./members'),
		people: await import('./people'),
		roots: await import('./import-roots'),
		scope: await import('./scope'),
		refusal: await import('./refusal')
	};
	m.db.applyMigrations(m.db.db);
	const studioId = m.people.upsertWorkspace('studio', 'Studio');
	const otherId = m.people.upsertWorkspace('other', 'Other');
	studio = new m.scope.WorkspaceScope(studioId);
	for (const [key, role] of [['ada', 'admin'], ['eli', 'editor'], ['pia', 'processor']] as const) {
		ids[key] = await m.people.upsertPerson({ email: `${key}@example.test`, displayName: key, password: 'long-enough-pw', workspaceId: studioId, role });
	}
	await m.people.upsertPerson({ email: 'eli@example.test', displayName: 'eli', password: 'long-enough-pw', workspaceId: otherId, role: 'reviewer' });
});

async function refusalCode(work: () => unknown): Promise<string> {
	try {
		await work();
	} catch (err) {
		if (err instanceof m.refusal.Refusal) return err.code;
		throw err;
	}
	return 'none';
}

describe('members', () => {
	it('refuses to demote, deactivate or remove the last active admin', async () => {
		expect(await refusalCode(() => m.members.changeRole(studio, ids.ada, 'editor'))).toBe('last_admin');
		expect(await refusalCode(() => m.members.setActive(studio, ids.eli, ids.ada, false))).toBe('last_admin');
		expect(await refusalCode(() => m.members.removeMember(studio, ids.ada))).toBe('last_admin');
		expect(m.members.listMembers(studio).find((x) => x.userId === ids.ada)?.role).toBe('admin');
	});

	it('lets an admin step down once another active admin exists, but not when that admin is deactivated', async () => {
		m.members.changeRole(studio, ids.pia, 'admin');
		await m.members.setActive(studio, ids.ada, ids.pia, false);
		expect(await refusalCode(() => m.members.changeRole(studio, ids.ada, 'editor'))).toBe('last_admin');
		await m.members.setActive(studio, ids.ada, ids.pia, true);
		expect(m.members.changeRole(studio, ids.ada, 'editor').role).toBe('editor');
		m.members.changeRole(studio, ids.ada, 'admin');
		m.members.changeRole(studio, ids.pia, 'processor');
	});

	it('never deactivates an account that belongs to another workspace too, nor one’s own', async () => {
		expect(await refusalCode(() => m.members.setActive(studio, ids.ada, ids.eli, false))).toBe('member_elsewhere');
		expect(await refusalCode(() => m.members.setActive(studio, ids.pia, ids.pia, false))).toBe('self');
		expect(m.members.listMembers(studio).find((x) => x.userId === ids.eli)).toMatchObject({ active: true, otherWorkspaces: 1 });
	});

	it('answers "not found" for a person of another workspace', async () => {
		const other = new m.scope.WorkspaceScope('no-such-workspace');
		expect(await refusalCode(() => m.members.changeRole(other, ids.eli, 'admin'))).toBe('not_found');
	});
});

describe('import roots', () => {
	it('accepts an existing readable folder and refuses files, missing paths and Lockstep’s own data', async () => {
		const footage = join(dataDir, '..', `footage-${Date.now()}`);
		mkdirSync(footage);
		writeFileSync(join(footage, 'clip.txt'), 'x');
		const root = await m.roots.addImportRoot(studio, { name: 'Footage', path: footage, mode: 'reference' });
		expect(root.mode).toBe('reference');
		expect(await refusalCode(() => m.roots.addImportRoot(studio, { name: 'Again', path: footage, mode: 'copy' }))).toBe('duplicate_path');
		expect(await refusalCode(() => m.roots.addImportRoot(studio, { name: 'File', path: join(footage, 'clip.txt'), mode: 'copy' }))).toBe('not_a_folder');
		expect(await refusalCode(() => m.roots.addImportRoot(studio, { name: 'Gone', path: join(footage, 'gone'), mode: 'copy' }))).toBe('path_missing');
		expect(await refusalCode(() => m.roots.addImportRoot(studio, { name: 'Data', path: dataDir, mode: 'copy' }))).toBe('reserved_path');
		expect(await refusalCode(() => m.roots.addImportRoot(studio, { name: 'Root', path: '/', mode: 'copy' }))).toBe('reserved_path');
		expect(await refusalCode(() => m.roots.addImportRoot(studio, { name: 'Rel', path: 'footage', mode: 'copy' }))).toBe('invalid_input');
		m.roots.removeImportRoot(studio, root.id);
		expect(m.roots.listImportRoots(studio)).toEqual([]);
	});
});
