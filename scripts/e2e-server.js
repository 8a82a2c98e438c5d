// Starts the built app for the browser tests on a fresh database of its own.
import { spawnSync, spawn } from 'node:child_process';
import { rmSync, mkdirSync } from 'node:fs';

rmSync('data/e2e', { recursive: true, force: true });
mkdirSync('data/e2e', { recursive: true });
const env = { ...process.env };
for (const step of [['npx', ['tsx', 'scripts/migrate.ts']], ['npx', ['tsx', 'scripts/seed.ts']]]) {
	const r = spawnSync(step[0], step[1], { stdio: 'inherit', env });
	if (r.status !== 0) process.exit(r.status ?? 1);
}
const server = spawn('node', ['build'], { stdio: 'inherit', env });
for (const signal of ['SIGINT', 'SIGTERM']) process.on(signal, () => server.kill(signal));
server.on('exit', (code) => process.exit(code ?? 0));
