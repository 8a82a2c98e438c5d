/*
 * Seeds the demo: two workspaces of an invented studio and one person per role,
 * with their passwords printed. Safe to run again; it resets the demo passwords.
 */
import { eq } from 'drizzle-orm';
import { applyMigrations, db } from '../src/lib/server/db/index';
import { captureSessions } from '../src/lib/server/db/schema';
import { newId } from '../src/lib/server/ids';
import { upsertPerson, upsertWorkspace } from '../src/lib/server/people';
import { DEMO_SESSION_NAME, seedDemoSession } from './seed-demo-session';
import type { RoleName } from '../src/lib/permissions';

applyMigrations(db);

export const DEMO_PEOPLE: { email: string; displayName: string; role: RoleName; password: string }[] = [
	{ email: 'ada.admin@lockstep.test', displayName: 'Ada Okafor', role: 'admin', password: 'demo-admin-2026' },
	{ email: 'eli.editor@lockstep.test', displayName: 'Eli Marchetti', role: 'editor', password: 'demo-editor-2026' },
	{ email: 'rae.reviewer@lockstep.test', displayName: 'Rae Lindqvist', role: 'reviewer', password: 'demo-reviewer-2026' },
	{ email: 'pia.processor@lockstep.test', displayName: 'Pia Novak', role: 'processor', password: 'demo-processor-2026' }
];

export const OUTSIDER = {
	email: 'tove.tidewater@lockstep.test',
	displayName: 'Tove Brandt',
	role: 'editor' as const,
	password: 'demo-tidewater-2026'
};

const studio = upsertWorkspace('fieldglass', 'Fieldglass Capture Studio');
const other = upsertWorkspace('tidewater', 'Tidewater Survey Unit');

const ids: Record<string, string> = {};
for (const person of DEMO_PEOPLE) {
	ids[person.role] = await upsertPerson({ ...person, workspaceId: studio });
}
// One person also works for a second workspace, with another role there,
// and one belongs to that other workspace only.
await upsertPerson({ ...DEMO_PEOPLE[1], role: 'reviewer', workspaceId: other });
await upsertPerson({ ...OUTSIDER, workspaceId: other });

if (!db.select().from(captureSessions).where(eq(captureSessions.workspaceId, other)).get()) {
	db.insert(captureSessions)
		.values({ id: newId(), workspaceId: other, name: 'Breakwater lamp, low tide', site: 'North pier', captureDate: '2026-10-14' })
		.run();
}

if (process.env.SEED_DEMO_SESSION !== '0') {
	console.log(`Demo capture session "${DEMO_SESSION_NAME}": ingesting, probing and aligning…`);
	await seedDemoSession(studio, ids.editor);
}

console.log('\nDemo people (workspace "Fieldglass Capture Studio"):');
for (const p of DEMO_PEOPLE) console.log(`  ${p.role.padEnd(10)} ${p.email.padEnd(30)} password: ${p.password}`);
console.log('  (Eli is also a reviewer in "Tidewater Survey Unit".)');
console.log(`\nWorkspace "Tidewater Survey Unit" only:\n  editor     ${OUTSIDER.email.padEnd(30)} password: ${OUTSIDER.password}\n`);
