import { Upload, type DetailedError, type HttpResponse } from 'tus-js-client';
import type { UploadOutcome } from '$lib/server/uploads';

export interface UploadSettings {
	endpoint: string;
	chunkSizeBytes: number;
	maxSizeBytes: number;
}

export type UploadStatus = 'waiting' | 'uploading' | 'retrying' | 'finishing' | 'stopped' | 'done';

/** Waits between attempts after a dropped connection, growing to half a minute (common practice). */
const RETRY_DELAYS_MS = [0, 1000, 3000, 6000, 12000, 20000, 30000];

/** One file on its way into a capture session over tus, resumable after a dropped connection. */
export class UploadItem {
	status = $state<UploadStatus>('waiting');
	bytesSent = $state(0);
	outcome = $state<UploadOutcome | null>(null);
	/** Why the upload stopped before the server answered (connection lost, server down). */
	problem = $state<string | null>(null);
	readonly key = crypto.randomUUID();
	#upload: Upload | null = null;

	constructor(
		readonly file: File,
		readonly sessionId: string,
		readonly cameraPosition: string
	) {}

	get percent(): number {
		return this.file.size === 0 ? (this.status === 'done' ? 100 : 0) : Math.round((this.bytesSent / this.file.size) * 100);
	}

	/** Starts, or resumes from where the server left off, reporting the outcome through `done`. */
	async start(settings: UploadSettings, done: (outcome: UploadOutcome) => void): Promise<void> {
		if (this.file.size > settings.maxSizeBytes) {
			const limit = (settings.maxSizeBytes / 1024 ** 3).toFixed(0);
			this.#finish({ kind: 'refused', code: 'too_large', message: `${this.file.name} is larger than this server accepts (${limit} GB).` }, done);
			return;
		}
		this.status = 'uploading';
		this.problem = null;
		const upload = new Upload(this.file, {
			endpoint: settings.endpoint,
			chunkSize: settings.chunkSizeBytes,
			retryDelays: RETRY_DELAYS_MS,
			metadata: { sessionId: this.sessionId, filename: this.file.name, cameraPosition: this.cameraPosition },
			// The session is part of the fingerprint: the same file sent to another session is another upload.
			fingerprint: async (file) => ['lockstep', this.sessionId, file.name, file.size, file.lastModified].join('|'),
			storeFingerprintForResuming: true,
			removeFingerprintOnSuccess: true,
			onProgress: (sent) => {
				this.bytesSent = sent;
				this.status = sent === this.file.size ? 'finishing' : 'uploading';
			},
			onShouldRetry: (err) => {
				const status = err.originalResponse?.getStatus() ?? 0;
				const retry = !(status >= 400 && status < 500) || status === 409 || status === 423;
				if (retry) this.status = 'retrying';
				return retry;
			},
			onSuccess: ({ lastResponse }) => this.#finish(outcomeOf(lastResponse), done),
			onError: (err) => {
				const refused = refusalOf(err);
				if (refused) this.#finish(refused, done);
				else {
					this.status = 'stopped';
					this.problem = 'The connection was lost and retries ran out. Resume continues from the last byte the server holds.';
				}
			}
		});
		this.#upload = upload;
		const previous = await upload.findPreviousUploads();
		if (previous.length) upload.resumeFromPreviousUpload(previous[0]);
		upload.start();
	}

	/** Stops sending; the part already sent stays on the server so the upload can resume. */
	async pause(): Promise<void> {
		await this.#upload?.abort(false);
		this.status = 'stopped';
		this.problem = 'Paused.';
	}

	#finish(outcome: UploadOutcome, done: (outcome: UploadOutcome) => void): void {
		this.outcome = outcome;
		this.status = 'done';
		if (outcome.kind !== 'refused') this.bytesSent = this.file.size;
		done(outcome);
	}
}

/** The outcome in a finishing PATCH's body, or in the header of a HEAD that found the upload already finished. */
function outcomeOf(response: HttpResponse): UploadOutcome {
	const header = response.getHeader('Lockstep-Outcome');
	if (header) return JSON.parse(new TextDecoder().decode(base64UrlBytes(header))) as UploadOutcome;
	try {
		const body = JSON.parse(response.getBody()) as { outcome?: UploadOutcome };
		if (body.outcome) return body.outcome;
	} catch {
		// fall through
	}
	return { kind: 'refused', code: 'no_answer', message: 'The server received the file but did not say what became of it; reload the page to see the clips.' };
}

function refusalOf(err: Error | DetailedError): UploadOutcome | null {
	const response = 'originalResponse' in err ? err.originalResponse : null;
	if (!response) return null;
	const status = response.getStatus();
	if (status < 400 || status >= 500 || status === 409 || status === 423) return null;
	try {
		const body = JSON.parse(response.getBody()) as { error?: { code: string; message: string } };
		if (body.error) return { kind: 'refused', code: body.error.code, message: body.error.message };
	} catch {
		// fall through
	}
	return { kind: 'refused', code: 'refused', message: `The server refused the upload (status ${status}).` };
}

function base64UrlBytes(text: string): Uint8Array {
	const base64 = text.replace(/-/g, '+').replace(/_/g, '/');
	return Uint8Array.from(atob(base64.padEnd(Math.ceil(base64.length / 4) * 4, '=')), (c) => c.charCodeAt(0));
}
