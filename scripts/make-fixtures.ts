/**
 * Fixture generator for Lockstep's alignment engine: multi-camera clips of
 * invented scenes with known truth (see fixtures/README.md).
 *
 *   npm run fixtures                      the small committed cases → fixtures/<case>/
 *   npm run fixtures -- --case NAME ...   named case(s); large ones → fixtures/generated/<case>/
 *   npm run fixtures -- --large           every large case (10-minute and 60-minute clips)
 *   npm run fixtures -- --all             everything
 *   npm run fixtures -- --verify          probe the existing cases against their truth.json
 *   npm run fixtures -- --list
 *   options: --out DIR (parent folder instead of fixtures/ or fixtures/generated/)
 */
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describeMediaBinaries } from '../src/lib/server/media/binaries';
import { generateCase, verifyCase } from './fixtures/generate';
import { caseDir } from './fixtures/paths';
import { CASES, findCase, type CaseSpec } from './fixtures/scenarios';
import type { Truth } from './fixtures/truth';

function usage(code: number): never {
	console.log(
		[
			'usage: npm run fixtures -- [--case NAME]... [--large] [--all] [--verify] [--list] [--out DIR]',
			'cases:',
			...CASES.map((c) => `  ${c.name.padEnd(13)} ${c.committed ? 'committed' : 'large    '}  ${c.clips.length} clips, ${Math.round(c.clips.reduce((s, x) => s + x.durationSeconds, 0))} s of media`)
		].join('\n')
	);
	process.exit(code);
}

async function main() {
	const args = process.argv.slice(2);
	const names: string[] = [];
	let large = false;
	let all = false;
	let verify = false;
	let out: string | undefined;
	for (let i = 0; i < args.length; i++) {
		const a = args[i];
		if (a === '--case') names.push(args[++i] ?? usage(2));
		else if (a === '--large') large = true;
		else if (a === '--all') all = true;
		else if (a === '--verify') verify = true;
		else if (a === '--out') out = args[++i] ?? usage(2);
		else if (a === '--list') usage(0);
		else if (a === '--help' || a === '-h') usage(0);
		else {
			console.error(`unknown argument: ${a}`);
			usage(2);
		}
	}
	let chosen: CaseSpec[];
	if (names.length) {
		chosen = names.map((n) => findCase(n) ?? (console.error(`no such case: ${n}`), usage(2)));
	} else if (all) chosen = CASES;
	else if (large) chosen = CASES.filter((c) => !c.committed);
	else chosen = CASES.filter((c) => c.committed);

	if (verify) {
		for (const spec of chosen) {
			const dir = caseDir(spec, out);
			const tf = join(dir, 'truth.json');
			if (!existsSync(tf)) {
				console.log(`${spec.name}: not generated (${tf})`);
				continue;
			}
			await verifyCase(JSON.parse(readFileSync(tf, 'utf8')) as Truth, dir);
			console.log(`${spec.name}: ok`);
		}
		return;
	}

	console.log(describeMediaBinaries());
	const started = Date.now();
	for (const spec of chosen) {
		const dir = caseDir(spec, out);
		const t0 = Date.now();
		console.log(`${spec.name} → ${dir}`);
		const truth = await generateCase(spec, { outDir: dir, log: (l) => console.log(l) });
		for (const c of truth.clips)
			console.log(
				`  ${c.file.padEnd(12)} offset ${c.offsetSeconds === null ? 'unmatched'.padStart(16) : c.offsetSeconds.toFixed(9).padStart(16)} s  drift ${c.driftPpm === null ? '-' : c.driftPpm.toFixed(4)} ppm`
			);
		console.log(`  done in ${((Date.now() - t0) / 1000).toFixed(1)} s`);
	}
	console.log(`all done in ${((Date.now() - started) / 1000).toFixed(1)} s`);
}

main().catch((e) => {
	console.error(e instanceof Error ? e.message : e);
	process.exit(1);
});
