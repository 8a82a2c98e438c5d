#!/usr/bin/env node
/**
 * Runs one of the engine's command-line entry points from a plain JavaScript bundle:
 *   node scripts/engine.mjs align [--json] ... FILE...      (what `npm run align` calls)
 *   node scripts/engine.mjs align-job '{"paths":[...]}'      (what the server's alignment job calls)
 * A TypeScript loader costs 1–2 s of start-up and recompiles the engine in every worker thread;
 * this bundles the entry and the worker once with esbuild, reuses the bundle while no source
 * it was built from has changed, and rebuilds (in ~0.2 s) when one has.
 */
import { mkdirSync, readFileSync, renameSync, statSync, writeFileSync } from 'node:fs';
import { dirname, join, relative, resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const ENTRIES = {
	align: 'scripts/align.ts',
	'align-job': 'scripts/align-job.ts'
};
// align-runner loads its worker from the file beside it; in a bundle, "beside it" is this folder.
const WORKER = { 'align-worker': 'src/lib/server/media/align-worker.ts' };
const outdir = join(root, 'node_modules', '.cache', 'lockstep-engine');

const [name, ...args] = process.argv.slice(2);
if (!(name in ENTRIES)) {
	process.stderr.write(`engine: unknown entry point "${name ?? ''}"; one of: ${Object.keys(ENTRIES).join(', ')}\n`);
	process.exit(2);
}

/** True when the bundle exists and every file it was built from is older than it. */
function isFresh(stampPath) {
	try {
		const stamp = JSON.parse(readFileSync(stampPath, 'utf8'));
		return stamp.inputs.every((input) => statSync(join(root, input)).mtimeMs <= stamp.builtAtMs);
	} catch {
		return false;
	}
}

/** Writes beside the target and renames, so a second process starting at the same moment never reads half a file. */
function writeAtomically(path, contents) {
	const temporary = `${path}.${process.pid}.tmp`;
	writeFileSync(temporary, contents);
	renameSync(temporary, path);
}

async function bundle(entry, stampPath) {
	mkdirSync(outdir, { recursive: true });
	// Under node_modules Node looks no further up for "type": the bundles are ES modules.
	writeAtomically(join(outdir, 'package.json'), '{ "type": "module" }\n');
	const builtAtMs = Date.now();
	// Loaded only to rebuild: most runs find the bundle fresh and never need it.
	const { build } = await import('esbuild');
	const result = await build({
		entryPoints: { [entry]: join(root, ENTRIES[entry]), ...Object.fromEntries(Object.entries(WORKER).map(([k, v]) => [k, join(root, v)])) },
		bundle: true,
		platform: 'node',
		format: 'esm',
		target: 'node20',
		packages: 'external',
		outdir,
		write: false,
		metafile: true,
		logLevel: 'error'
	});
	for (const file of result.outputFiles) writeAtomically(file.path, file.contents);
	const inputs = Object.keys(result.metafile.inputs).map((input) => relative(root, resolve(root, input)));
	writeAtomically(stampPath, JSON.stringify({ builtAtMs, inputs }));
}

const stampPath = join(outdir, `${name}.inputs.json`);
if (!isFresh(stampPath)) await bundle(name, stampPath);
process.argv = [process.argv[0], join(outdir, `${name}.js`), ...args];
await import(pathToFileURL(join(outdir, `${name}.js`)).href);
