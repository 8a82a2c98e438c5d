import type { AlignmentEditInput, RevisionView } from '$lib/server/alignment-edits';
import type { PublicClip } from '$lib/server/clips';
import { clipSessionSpan, nudgedOffset, type NudgeStep, type Span } from '$lib/sync/nudge';

/*
 * The workbench's state in the browser: what the server last said, the view (where the
 * timeline starts, how many pixels a second takes), the lane being worked on, and the
 * edits on their way. Every edit is sent with the session version it was based on; a
 * refusal because someone else saved first keeps the edit so nothing is lost.
 */

export interface WorkbenchSession {
	id: string;
	name: string;
	status: 'draft' | 'aligned' | 'in_review' | 'approved';
	version: number;
	referenceClipId: string | null;
	usableStartSeconds: number | null;
	usableEndSeconds: number | null;
}

export interface WorkbenchData {
	session: WorkbenchSession;
	clips: PublicClip[];
	commonSpan: Span | null;
	revisions: RevisionView[];
}

interface UndoEntry {
	label: string;
	undo: AlignmentEditInput;
	redo: AlignmentEditInput;
}

export interface Conflict {
	message: string;
	changes: RevisionView[];
	/** The edits of this page that were not saved, kept to apply again on top. */
	mine: { label: string; edit: AlignmentEditInput }[];
}

type Outbound = { label: string; edit: AlignmentEditInput; undoable?: UndoEntry; fromHistory?: 'undo' | 'redo' } | { label: string; revertTo: RevisionView };

const NUDGE_SETTLE_MS = 350;
export const MAX_PX_PER_SECOND = 48000 * 16;

export class WorkbenchState {
	session = $state<WorkbenchSession>({ id: '', name: '', status: 'draft', version: 0, referenceClipId: null, usableStartSeconds: null, usableEndSeconds: null });
	clips = $state<PublicClip[]>([]);
	commonSpan = $state<Span | null>(null);
	revisions = $state<RevisionView[]>([]);

	selectedId = $state<string | null>(null);
	viewStart = $state(0);
	pxPerSecond = $state(10);
	width = $state(900);
	playhead = $state(0);

	saving = $state(false);
	notice = $state<{ tone: 'ok' | 'error'; text: string } | null>(null);
	conflict = $state<Conflict | null>(null);
	undoStack = $state<UndoEntry[]>([]);
	redoStack = $state<UndoEntry[]>([]);

	/** A run of nudges on one lane, shown at once and saved as one change when the keys rest. */
	private pendingNudge: { clipId: string; fromOffset: number | null; toOffset: number; timer: ReturnType<typeof setTimeout> } | null = null;
	private chain: Promise<void> = Promise.resolve();
	private inFlight = 0;

	constructor(data: WorkbenchData) {
		this.accept(data);
		this.selectedId = data.clips.find((c) => c.id !== data.session.referenceClipId && c.offsetSeconds !== null)?.id ?? data.clips[0]?.id ?? null;
		this.fit();
	}

	accept(data: WorkbenchData): void {
		const { id, name, status, version, referenceClipId, usableStartSeconds, usableEndSeconds } = data.session;
		this.session = { id, name, status, version, referenceClipId, usableStartSeconds, usableEndSeconds };
		this.clips = data.clips;
		this.commonSpan = data.commonSpan;
		this.revisions = data.revisions;
		const pending = this.pendingNudge;
		if (pending) this.setLocalOffset(pending.clipId, pending.toOffset);
	}

	get selected(): PublicClip | undefined {
		return this.clips.find((c) => c.id === this.selectedId);
	}

	get placed(): PublicClip[] {
		return this.clips.filter((c) => c.offsetSeconds !== null && c.durationSeconds !== null);
	}

	/** Where any clip has media, in session time: the whole session. */
	get extent(): Span {
		const spans = this.placed.map((c) =>
			clipSessionSpan({ offsetSeconds: c.offsetSeconds!, driftPpm: c.driftPpm ?? 0, durationSeconds: c.durationSeconds! })
		);
		if (spans.length === 0) return { startSeconds: 0, endSeconds: 60 };
		return { startSeconds: Math.min(0, ...spans.map((s) => s.startSeconds)), endSeconds: Math.max(...spans.map((s) => s.endSeconds)) };
	}

	get viewSeconds(): number {
		return this.width / this.pxPerSecond;
	}

	get busy(): boolean {
		return this.saving || this.pendingNudge !== null;
	}

	// ─── View ───────────────────────────────────────────────────────────────

	minPxPerSecond(): number {
		const { startSeconds, endSeconds } = this.extent;
		return this.width / ((endSeconds - startSeconds) * 1.04);
	}

	fit(): void {
		const { startSeconds, endSeconds } = this.extent;
		this.pxPerSecond = this.minPxPerSecond();
		this.viewStart = startSeconds - (endSeconds - startSeconds) * 0.02;
	}

	/** Zooms by `factor` keeping the session instant under `anchorPx` where it is. */
	zoom(factor: number, anchorPx = this.width / 2): void {
		const anchor = this.viewStart + anchorPx / this.pxPerSecond;
		this.pxPerSecond = Math.min(MAX_PX_PER_SECOND, Math.max(this.minPxPerSecond(), this.pxPerSecond * factor));
		this.viewStart = anchor - anchorPx / this.pxPerSecond;
		this.clampView();
	}

	scrollBy(seconds: number): void {
		this.viewStart += seconds;
		this.clampView();
	}

	clampView(): void {
		const { startSeconds, endSeconds } = this.extent;
		const margin = (endSeconds - startSeconds) * 0.02;
		this.viewStart = Math.min(Math.max(this.viewStart, startSeconds - margin - this.viewSeconds / 2), endSeconds + margin - this.viewSeconds / 2);
	}

	/** Keeps `seconds` in view, paging forward as playback runs off the right edge. */
	follow(seconds: number): void {
		if (seconds < this.viewStart || seconds > this.viewStart + this.viewSeconds * 0.95) this.viewStart = seconds - this.viewSeconds * 0.1;
	}

	select(offset: number): void {
		const index = this.clips.findIndex((c) => c.id === this.selectedId);
		const next = this.clips[(index + offset + this.clips.length) % this.clips.length];
		if (next) this.selectedId = next.id;
	}

	// ─── Edits ──────────────────────────────────────────────────────────────

	private setLocalOffset(clipId: string, offsetSeconds: number): void {
		this.clips = this.clips.map((c) => (c.id === clipId ? { ...c, offsetSeconds } : c));
	}

	/** Why a lane cannot be moved, or null. */
	moveProblem(clip: PublicClip): string | null {
		if (clip.locked) return `${clip.cameraLabel} is locked.`;
		if (clip.id === this.session.referenceClipId) return `${clip.cameraLabel} is the reference; its offset is 0 by definition.`;
		return null;
	}

	nudge(step: NudgeStep, count: number, clipId = this.selectedId): void {
		const clip = this.clips.find((c) => c.id === clipId);
		if (!clip) return;
		const problem = this.moveProblem(clip);
		if (problem) {
			this.notice = { tone: 'error', text: problem };
			return;
		}
		const frameRate = clip.frameRateNum && clip.frameRateDen ? { num: clip.frameRateNum, den: clip.frameRateDen } : null;
		const next = nudgedOffset(clip.offsetSeconds ?? 0, step, count, { sampleRate: clip.sampleRate, frameRate });
		if (next === null) {
			this.notice = { tone: 'error', text: `${clip.cameraLabel} has no ${step === 'sample' ? 'sample rate' : 'frame rate'} to nudge by.` };
			return;
		}
		this.previewOffset(clip.id, next);
		this.settleNudgeSoon();
	}

	/** Shows a lane at a new offset at once (a nudge or a drag); saving follows. */
	previewOffset(clipId: string, offsetSeconds: number): void {
		if (this.pendingNudge && this.pendingNudge.clipId !== clipId) this.settleNudge();
		if (!this.pendingNudge) {
			const before = this.clips.find((c) => c.id === clipId)?.offsetSeconds ?? null;
			this.pendingNudge = { clipId, fromOffset: before, toOffset: offsetSeconds, timer: setTimeout(() => {}, 0) };
		}
		this.pendingNudge.toOffset = offsetSeconds;
		this.setLocalOffset(clipId, offsetSeconds);
	}

	settleNudgeSoon(delay = NUDGE_SETTLE_MS): void {
		if (!this.pendingNudge) return;
		clearTimeout(this.pendingNudge.timer);
		this.pendingNudge.timer = setTimeout(() => this.settleNudge(), delay);
	}

	/** Sends the lane's resting offset as one change. */
	settleNudge(): void {
		const pending = this.pendingNudge;
		if (!pending) return;
		clearTimeout(pending.timer);
		this.pendingNudge = null;
		const clip = this.clips.find((c) => c.id === pending.clipId);
		if (!clip || pending.toOffset === pending.fromOffset) return;
		const label = `offset of ${clip.cameraLabel}`;
		const redo: AlignmentEditInput = { kind: 'offset', clipId: clip.id, offsetSeconds: pending.toOffset };
		const undo: AlignmentEditInput = { kind: 'offset', clipId: clip.id, offsetSeconds: pending.fromOffset ?? 0 };
		this.enqueue({ label, edit: redo, undoable: { label, undo, redo } });
	}

	/** Any change but a nudge; `undo` is the change that takes it back, when there is one. */
	edit(label: string, edit: AlignmentEditInput, undo?: AlignmentEditInput): void {
		this.settleNudge();
		this.enqueue({ label, edit, undoable: undo ? { label, undo, redo: edit } : undefined });
	}

	revert(revision: RevisionView): void {
		this.settleNudge();
		this.enqueue({ label: `revert to version ${revision.sessionVersion}`, revertTo: revision });
	}

	undo(): void {
		this.settleNudge();
		const entry = this.undoStack.at(-1);
		if (!entry) return;
		this.undoStack = this.undoStack.slice(0, -1);
		this.enqueue({ label: `undo ${entry.label}`, edit: { ...entry.undo, reason: `Undo: ${entry.label}` }, undoable: entry, fromHistory: 'undo' });
	}

	redo(): void {
		this.settleNudge();
		const entry = this.redoStack.at(-1);
		if (!entry) return;
		this.redoStack = this.redoStack.slice(0, -1);
		this.enqueue({ label: `redo ${entry.label}`, edit: { ...entry.redo, reason: `Redo: ${entry.label}` }, undoable: entry, fromHistory: 'redo' });
	}

	private enqueue(outbound: Outbound): void {
		this.inFlight++;
		this.saving = true;
		this.chain = this.chain.then(() => this.send(outbound)).finally(() => {
			this.inFlight--;
			this.saving = this.inFlight > 0;
		});
	}

	/** Resolves when everything queued has been answered (tests and the benchmark wait on it). */
	settled(): Promise<void> {
		this.settleNudge();
		return this.chain;
	}

	private async send(outbound: Outbound): Promise<void> {
		if (this.conflict && 'edit' in outbound) {
			// Once overtaken, later edits wait with the first one instead of landing on a state nobody looked at.
			this.conflict.mine = [...this.conflict.mine, { label: outbound.label, edit: outbound.edit }];
			return;
		}
		const base = `/api/sessions/${this.session.id}`;
		const response = await fetch('revertTo' in outbound ? `${base}/revisions/${outbound.revertTo.id}/revert` : `${base}/alignment`, {
			method: 'POST',
			headers: { 'content-type': 'application/json', accept: 'application/json' },
			body: JSON.stringify('revertTo' in outbound ? { version: this.session.version } : { version: this.session.version, edit: outbound.edit })
		}).catch(() => null);
		if (!response) {
			this.notice = { tone: 'error', text: `Could not reach the server; the ${outbound.label} was not saved. Check the connection and try again.` };
			await this.reload();
			return;
		}
		const body: unknown = await response.json().catch(() => null);
		if (response.ok && body && typeof body === 'object' && 'session' in body) {
			this.accept(body as WorkbenchData);
			const done = 'revertTo' in outbound ? 'Reverted to' : outbound.fromHistory === 'undo' ? 'Undid the' : outbound.fromHistory === 'redo' ? 'Redid the' : 'Saved the';
			const what = 'revertTo' in outbound ? `version ${outbound.revertTo.sessionVersion}` : (outbound.undoable?.label ?? outbound.label);
			this.notice = { tone: 'ok', text: `${done} ${what} (now version ${this.session.version}).` };
			if ('edit' in outbound && outbound.undoable) {
				if (outbound.fromHistory === 'undo') this.redoStack = [...this.redoStack, outbound.undoable];
				else {
					this.undoStack = [...this.undoStack, outbound.undoable];
					if (!outbound.fromHistory) this.redoStack = [];
				}
			}
			return;
		}
		const error = errorOf(body);
		if (response.status === 409 && error.code === 'version_conflict') {
			this.conflict = {
				message: error.message,
				changes: error.changes ?? [],
				mine: 'edit' in outbound ? [{ label: outbound.label, edit: outbound.edit }] : []
			};
			this.notice = null;
		} else {
			this.notice = { tone: 'error', text: error.message || `The ${outbound.label} was refused (${response.status}).` };
		}
		await this.reload();
	}

	async reload(): Promise<void> {
		const response = await fetch(`/api/sessions/${this.session.id}/alignment`, { headers: { accept: 'application/json' } }).catch(() => null);
		if (response?.ok) this.accept((await response.json()) as WorkbenchData);
	}

	/** Sends the kept edits again, now based on the version that overtook them. */
	applyMineOnTop(): void {
		const kept = this.conflict?.mine ?? [];
		this.conflict = null;
		for (const { label, edit } of kept) this.enqueue({ label, edit });
	}

	discardMine(): void {
		this.conflict = null;
		this.notice = { tone: 'ok', text: 'Your unsaved change was dropped; the workbench shows the saved timing.' };
	}
}

function errorOf(body: unknown): { code?: string; message: string; changes?: RevisionView[] } {
	if (body && typeof body === 'object' && 'error' in body && body.error && typeof body.error === 'object') {
		const e = body.error as { code?: string; message?: string; changes?: RevisionView[] };
		return { code: e.code, message: e.message ?? '', changes: e.changes };
	}
	return { message: '' };
}
