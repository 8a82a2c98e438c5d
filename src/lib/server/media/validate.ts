import { execFile } from 'node:child_process';
import { open, stat } from 'node:fs/promises';
import { promisify } from 'node:util';
import { mediaBinaries } from './binaries';
import { MediaReadError, probeMedia, type MediaProbe } from './probe';

const run = promisify(execFile);

export type IngestProblem = 'empty_file' | 'not_media' | 'truncated' | 'no_video' | 'unsupported_codec';

/** Why a file cannot become a clip, in words for the person who brought it. */
export class IngestError extends Error {
	constructor(
		readonly code: IngestProblem,
		message: string
	) {
		super(message);
		this.name = 'IngestError';
	}
}

export interface ValidatedMedia {
	probe: MediaProbe;
	sizeBytes: number;
	/** Set when the clip is usable but limited, e.g. it has no sound to align by. */
	warning: string | null;
}

// Leading bytes of containers cameras write (ISO BMFF 'ftyp' at offset 4, Matroska/WebM EBML,
// RIFF/AVI, MPEG-TS sync byte, Ogg), from the formats' specifications (from memory).
function looksLikeContainer(head: Buffer): boolean {
	if (head.length >= 8 && ['ftyp', 'moov', 'mdat', 'wide', 'free', 'skip'].includes(head.subarray(4, 8).toString('latin1'))) return true;
	if (head.subarray(0, 4).equals(Buffer.from([0x1a, 0x45, 0xdf, 0xa3]))) return true;
	if (head.subarray(0, 4).toString('latin1') === 'RIFF') return true;
	if (head.subarray(0, 4).toString('latin1') === 'OggS') return true;
	return head[0] === 0x47 && head.length > 188 && head[188] === 0x47;
}

let decoders: Set<string> | undefined;
async function knownDecoders(): Promise<Set<string>> {
	if (decoders) return decoders;
	const { stdout } = await run(mediaBinaries().ffmpegPath, ['-hide_banner', '-decoders'], { maxBuffer: 4 * 1024 * 1024 });
	decoders = new Set(
		stdout
			.split('\n')
			.map((line) => line.match(/^\s[VAS.][F.][S.][X.][B.][D.]\s+(\S+)/)?.[1])
			.filter((name): name is string => !!name)
	);
	return decoders;
}

/**
 * Checks that a file can become a clip before any record is made of it: not empty, a media
 * container, complete, with a video stream in a codec this server decodes.
 */
export async function validateMediaFile(path: string, displayName: string): Promise<ValidatedMedia> {
	const { size } = await stat(path);
	if (size === 0) throw new IngestError('empty_file', `${displayName} is empty (0 bytes). Copy it from the card again.`);

	const handle = await open(path, 'r');
	const head = Buffer.alloc(512);
	await handle.read(head, 0, 512, 0);
	await handle.close();

	let probe: MediaProbe;
	try {
		probe = await probeMedia(path, { frameTimes: 'never' });
	} catch (error) {
		if (!(error instanceof MediaReadError)) throw error;
		if (looksLikeContainer(head)) {
			throw new IngestError(
				'truncated',
				`${displayName} is truncated or corrupt (${error.reason}). Copy it from the card again; a recording cut off by a flat battery may need repair first.`
			);
		}
		throw new IngestError('not_media', `${displayName} is not a video file Lockstep can read. Bring the camera's original clip (MP4, MOV, MKV, AVI…).`);
	}

	if (!probe.video) {
		throw new IngestError(
			'no_video',
			`${displayName} has no video stream${probe.audio ? ' (only sound)' : ''}. Lockstep lines up camera clips: bring the video file.`
		);
	}
	const available = await knownDecoders();
	const unsupported = [probe.video, probe.audio].find((s) => s && (!s.codec || s.codec === 'unknown' || s.codec === 'none' || !available.has(s.codec)));
	if (unsupported) {
		throw new IngestError(
			'unsupported_codec',
			`${displayName} uses a codec this server cannot decode (${unsupported.codec || 'unnamed'}). Transcode it to H.264/AAC, keeping the frame rate, and bring that.`
		);
	}

	await checkComplete(path, displayName);
	return {
		probe,
		sizeBytes: size,
		warning: probe.audio ? null : 'No audio stream: this clip cannot be aligned by sound and must be placed by hand.'
	};
}

/** Reads every packet's position: a file cut short has packets that point past its end. */
async function checkComplete(path: string, displayName: string): Promise<void> {
	const { stderr } = await run(
		mediaBinaries().ffprobePath,
		['-v', 'error', '-show_entries', 'packet=pos', '-of', 'csv=p=0', path],
		{ maxBuffer: 512 * 1024 * 1024 }
	).catch((error: { stderr?: string }) => ({ stderr: error.stderr ?? 'unreadable' }));
	if (/partial file|Invalid data|error reading|truncat/i.test(stderr)) {
		throw new IngestError(
			'truncated',
			`${displayName} is truncated: its index promises more data than the file holds. Copy it from the card again.`
		);
	}
}
