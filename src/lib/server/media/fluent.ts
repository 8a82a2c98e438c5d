import ffmpeg from 'fluent-ffmpeg';
import { mediaBinaries } from './binaries';

// Apart from binaries.ts because loading fluent-ffmpeg takes ~0.1 s: the alignment engine
// loads binaries.ts and spawns ffmpeg itself, so it should not pay for a library it never uses.

let pathsSet = false;

/** A fluent-ffmpeg command reading `input`, run with the ffmpeg and ffprobe that mediaBinaries() chose. */
export function ffmpegCommand(input: string): ffmpeg.FfmpegCommand {
	if (!pathsSet) {
		const { ffmpegPath, ffprobePath } = mediaBinaries();
		ffmpeg.setFfmpegPath(ffmpegPath);
		ffmpeg.setFfprobePath(ffprobePath);
		pathsSet = true;
	}
	return ffmpeg(input);
}
