import { closeSync, openSync, readSync } from 'node:fs';
import { OnsetEnvelopeBuilder, type OnsetEnvelope } from '../../sync/onset-envelope';
import { envelopeOptions, type PairOptions } from '../../sync/pair';
import type { PcmSource } from '../../sync/types';
import type { DecodedSound } from './decode';

/** One buffer for reading sound in passing: reused, it stays in memory that is already mapped. */
let passingBuffer: Int16Array | null = null;
const PASSING_SAMPLES = 1 << 19;

function readInto(fd: number, samples: Int16Array, firstSample: number) {
	const bytes = new Uint8Array(samples.buffer, samples.byteOffset, samples.byteLength);
	for (let offset = 0; offset < bytes.length; ) {
		const read = readSync(fd, bytes, offset, bytes.length - offset, firstSample * 2 + offset);
		if (read === 0) throw new Error('the decoded sound ended early');
		offset += read;
	}
}

/**
 * The clip's onset envelope, read from its scratch file a megabyte at a time. Reading an hour
 * (58 MB at 8 kHz) into fresh memory cost more than filtering it: every new page is a fault,
 * about 6 µs each on this kind of machine.
 */
export function soundEnvelope(sound: DecodedSound, options: Pick<PairOptions, 'envelopeRate' | 'band'>): OnsetEnvelope {
	const builder = new OnsetEnvelopeBuilder(sound.sampleRate, sound.startSeconds, sound.length, envelopeOptions(options, sound.fullScale));
	passingBuffer ??= new Int16Array(PASSING_SAMPLES);
	const fd = openSync(sound.scratchPath, 'r');
	try {
		for (let start = 0; start < sound.length; start += PASSING_SAMPLES) {
			const chunk = passingBuffer.subarray(0, Math.min(PASSING_SAMPLES, sound.length - start));
			readInto(fd, chunk, start);
			builder.push(chunk);
		}
	} finally {
		closeSync(fd);
	}
	return builder.finish();
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
