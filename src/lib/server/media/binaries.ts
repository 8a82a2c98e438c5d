import { accessSync, constants, statSync } from 'node:fs';
import { execFileSync } from 'node:child_process';
import { createRequire } from 'node:module';
import { delimiter, isAbsolute, join } from 'node:path';

/**
 * Where the ffmpeg and ffprobe binaries come from, resolved once per process:
 * FFMPEG_PATH / FFPROBE_PATH if set, else the system's on PATH, else the
 * binaries shipped inside the npm packages (an old ffmpeg, but always there).
 */
export interface MediaBinaries {
	ffmpegPath: string;
	ffprobePath: string;
	ffmpegSource: BinarySource;
	ffprobeSource: BinarySource;
}

export type BinarySource = 'environment' | 'system' | 'packaged';

const require = createRequire(import.meta.url);
let resolved: MediaBinaries | undefined;
const versions = new Map<string, string | undefined>();

function isExecutableFile(path: string): boolean {
	try {
		accessSync(path, constants.X_OK);
		return statSync(path).isFile();
	} catch {
		return false;
	}
}

/**
 * The first executable `name` on PATH, found by looking at the file system: running
 * `name -version` to find out costs 100–200 ms per binary, which every `align` and every
 * job process would pay before doing any work.
 */
function onPath(name: string): string | undefined {
	for (const dir of (process.env.PATH ?? '').split(delimiter)) {
		if (!dir || !isAbsolute(dir)) continue;
		const candidate = join(dir, name);
		if (isExecutableFile(candidate)) return candidate;
	}
	return undefined;
}

function resolveOne(name: 'ffmpeg' | 'ffprobe'): { path: string; source: BinarySource } {
	const fromEnv = process.env[name === 'ffmpeg' ? 'FFMPEG_PATH' : 'FFPROBE_PATH'];
	if (fromEnv) {
		if (!isExecutableFile(fromEnv)) throw new Error(`${name} at ${fromEnv} (from the environment) is not an executable file; fix or unset the variable.`);
		return { path: fromEnv, source: 'environment' };
	}
	const system = onPath(name);
	if (system) return { path: system, source: 'system' };
	const packaged: string =
		name === 'ffmpeg' ? require('@ffmpeg-installer/ffmpeg').path : require('@ffprobe-installer/ffprobe').path;
	if (!isExecutableFile(packaged)) throw new Error(`No working ${name}: install it (apt-get install -y ffmpeg) or set the path in the environment.`);
	return { path: packaged, source: 'packaged' };
}

export function mediaBinaries(): MediaBinaries {
	if (resolved) return resolved;
	const f = resolveOne('ffmpeg');
	const p = resolveOne('ffprobe');
	resolved = { ffmpegPath: f.path, ffprobePath: p.path, ffmpegSource: f.source, ffprobeSource: p.source };
	return resolved;
}

/** The first line of `path -version` (without the copyright), read once per binary and only when asked. */
export function binaryVersion(path: string): string {
	if (!versions.has(path)) {
		let version: string | undefined;
		try {
			const out = execFileSync(path, ['-version'], { encoding: 'utf8', stdio: ['ignore', 'pipe', 'ignore'] });
			version = out.split('\n')[0]?.replace(/ Copyright.*$/, '').trim();
		} catch {
			version = undefined;
		}
		versions.set(path, version);
	}
	return versions.get(path) ?? 'does not run';
}

export function describeMediaBinaries(b: MediaBinaries = mediaBinaries()): string {
	return `ffmpeg: ${b.ffmpegPath} (${b.ffmpegSource}, ${binaryVersion(b.ffmpegPath)}); ffprobe: ${b.ffprobePath} (${b.ffprobeSource}, ${binaryVersion(b.ffprobePath)})`;
}
