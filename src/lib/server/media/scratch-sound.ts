import { closeSync, openSync, readSync } from 'node:fs';
import type { PcmSource } from '../../sync/types';
import type { DecodedSound } from './decode';

function readInto(fd: number, samples: Int16Array, firstSample: number) {
	const bytes = new Uint8Array(samples.buffer, samples.byteOffset, samples.byteLength);
	for (let offset = 0; offset < bytes.length; ) {
		const read = readSync(fd, bytes, offset, bytes.length - offset, firstSample * 2 + offset);
		if (read === 0) throw new Error('the decoded sound ended early');
		offset += read;
	}
}

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
			readInto(fd, samples, start);
			return samples;
		},
		close() {
			if (fd !== null) closeSync(fd);
			fd = null;
		}
	};
}
