import { spawn } from 'node:child_process';
import { mediaBinaries } from './binaries';

/** A mono AAC proxy of the clip's sound for playback in the browser, faststart so it streams. */
export function makeAudioProxy(mediaPath: string, outPath: string, signal?: AbortSignal): Promise<void> {
	const args = [
		'-nostdin', '-v', 'error', '-y',
		'-i', mediaPath,
		'-map', '0:a:0', '-vn', '-sn', '-dn',
		'-ac', '1', '-c:a', 'aac', '-b:a', '96k',
		'-movflags', '+faststart',
		'-f', 'mp4', outPath
	];
	return new Promise((resolve, reject) => {
		const child = spawn(mediaBinaries().ffmpegPath, args, { stdio: ['ignore', 'ignore', 'pipe'], signal });
		let stderr = '';
		child.stderr.setEncoding('utf8');
		child.stderr.on('data', (t: string) => (stderr = (stderr + t).slice(-2000)));
		child.on('error', reject);
		child.on('close', (code) => (code === 0 ? resolve() : reject(new Error(`ffmpeg could not make the audio proxy: ${stderr.trim().split('\n').pop() ?? code}`))));
	});
}
