import { execFileSync } from 'node:child_process';
import { createRequire } from 'node:module';
import ffmpeg from 'fluent-ffmpeg';

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
	ffmpegVersion: string;
	ffprobeVersion: string;
}

export type BinarySource = 'environment' | 'system' | 'packaged';

const require = createRequire(import.meta.url);
let resolved: MediaBinaries | undefined;

function versionOf(path: string): string | undefined {
	try {
		const out = execFileSync(path, ['-version'], { encoding: 'utf8', stdio: ['ignore', 'pipe', 'ignore'] });
		return out.split('\n')[0]?.replace(/ Copyright.*$/, '').trim();
	} catch {
		return undefined;
	}
}

function resolveOne(name: 'ffmpeg' | 'ffprobe'): { path: string; source: BinarySource; version: string } {
	const fromEnv = process.env[name === 'ffmpeg' ? 'FFMPEG_PATH' : 'FFPROBE_PATH'];
	if (fromEnv) {
		const version = versionOf(fromEnv);
		if (!version) throw new Error(`${name} at ${fromEnv} (from the environment) does not run; fix or unset the variable.`);
		return { path: fromEnv, source: 'environment', version };
	}
	const systemVersion = versionOf(name);
	if (systemVersion) return { path: name, source: 'system', version: systemVersion };
	const packaged: string =
		name === 'ffmpeg' ? require('@ffmpeg-installer/ffmpeg').path : require('@ffprobe-installer/ffprobe').path;
	const version = versionOf(packaged);
	if (!version) throw new Error(`No working ${name}: install it (apt-get install -y ffmpeg) or set the path in the environment.`);
	return { path: packaged, source: 'packaged', version };
}

export function mediaBinaries(): MediaBinaries {
	if (resolved) return resolved;
	const f = resolveOne('ffmpeg');
	const p = resolveOne('ffprobe');
	resolved = {
		ffmpegPath: f.path,
		ffprobePath: p.path,
		ffmpegSource: f.source,
		ffprobeSource: p.source,
		ffmpegVersion: f.version,
		ffprobeVersion: p.version
	};
	ffmpeg.setFfmpegPath(resolved.ffmpegPath);
	ffmpeg.setFfprobePath(resolved.ffprobePath);
	return resolved;
}

export function describeMediaBinaries(b: MediaBinaries = mediaBinaries()): string {
	return `ffmpeg: ${b.ffmpegPath} (${b.ffmpegSource}, ${b.ffmpegVersion}); ffprobe: ${b.ffprobePath} (${b.ffprobeSource}, ${b.ffprobeVersion})`;
}
