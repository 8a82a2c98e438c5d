import { closeSync, openSync } from 'node:fs';
import type { PcmSource } from '../../sync/types';
import { readSamplesAt, type DecodedSound } from './decode';

/** The scratch file as a source the pairing reads windows from; close it when the pairs are done. */
export function soundSource(sound: DecodedSound): PcmSource & { close(): void } {
	let fd: number | null = null;
	return {
		sampleRate: sound.sampleRate,
		startSeconds: sound.startSeconds,
		length: sound.length,
		fullScale: sound.fullScale,
		read(start, count) {
			if (start < 0 || count < 0 || start + count > sound.length) throw new RangeError(`samples ${start}…${start + count} are outside 0…${sound.length}`);
			fd ??= openSync(sound.scratchPath, 'r');
			const samples = new Int16Array(count);
			readSamplesAt(fd, samples, start);
			return samples;
		},
		close() {
			if (fd !== null) closeSync(fd);
			fd = null;
		}
	};
}
