import { ffmpegCommand } from './fluent';

/** A mono AAC proxy of the clip's sound for playback in the browser, faststart so it streams. */
export function makeAudioProxy(mediaPath: string, outPath: string, signal?: AbortSignal): Promise<void> {
	return new Promise((resolve, reject) => {
		const cancelled = () => new DOMException('Making the audio proxy was cancelled', 'AbortError');
		if (signal?.aborted) return reject(cancelled());

		// fluent-ffmpeg adds -y itself when the output is a file.
		const command = ffmpegCommand(mediaPath)
			.inputOptions('-nostdin', '-v', 'error')
			.noVideo()
			.audioChannels(1)
			.audioCodec('aac')
			.audioBitrate('96k')
			.outputOptions('-map', '0:a:0', '-sn', '-dn', '-movflags', '+faststart')
			.format('mp4');

		const stop = () => command.kill('SIGKILL');
		signal?.addEventListener('abort', stop, { once: true });
		const settle = (error?: Error) => {
			signal?.removeEventListener('abort', stop);
			if (signal?.aborted) reject(cancelled());
			else if (error) reject(error);
			else resolve();
		};
		command
			// fluent-ffmpeg lists ffmpeg's formats and encoders before spawning it, so an abort
			// can come while there is no process to kill yet.
			.on('start', () => {
				if (signal?.aborted) stop();
			})
			.on('end', () => settle())
			.on('error', (error, _stdout, stderr) => {
				const lastLine = stderr?.trim().split('\n').pop() || error.message;
				settle(new Error(`ffmpeg could not make the audio proxy: ${lastLine}`));
			})
			.save(outPath);
	});
}
