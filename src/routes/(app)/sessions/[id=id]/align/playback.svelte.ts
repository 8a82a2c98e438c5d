import { clipTimeOf, type ClipPlacement } from '$lib/sync/frames';

/*
 * Plays the session: each audible lane's listening copy (/api/clips/:id/proxy) started at
 * the clip time that matches the playhead, through Web Audio so lanes can be soloed,
 * muted and panned. The playhead runs on the audio clock; lanes that wander more than a
 * few milliseconds from it (drift, seeking) are put back.
 */

export interface PlayableClip extends ClipPlacement {
	id: string;
	durationSeconds: number;
}

interface Voice {
	element: HTMLAudioElement;
	gain: GainNode;
	panner: StereoPannerNode;
	startTimer: ReturnType<typeof setTimeout> | null;
}

const RESYNC_SECONDS = 0.025;

export class Playback {
	playing = $state(false);
	solo = $state<string[]>([]);
	muted = $state<string[]>([]);
	volume = $state(0.7);
	twoEar = $state<{ on: boolean; left: string | null; right: string | null }>({ on: false, left: null, right: null });

	private context: AudioContext | null = null;
	private voices = new Map<string, Voice>();
	private startSession = 0;
	private startClock = 0;
	private frame = 0;
	private lastResync = 0;

	constructor(
		private readonly clips: () => PlayableClip[],
		private readonly onTime: (sessionSeconds: number) => void
	) {}

	audible(id: string): boolean {
		if (this.twoEar.on) return id === this.twoEar.left || id === this.twoEar.right;
		if (this.solo.length) return this.solo.includes(id);
		return !this.muted.includes(id);
	}

	toggle(list: 'solo' | 'muted', id: string): void {
		this[list] = this[list].includes(id) ? this[list].filter((x) => x !== id) : [...this[list], id];
		this.applyMix();
	}

	setTwoEar(patch: Partial<{ on: boolean; left: string | null; right: string | null }>): void {
		this.twoEar = { ...this.twoEar, ...patch };
		this.applyMix();
	}

	setVolume(volume: number): void {
		this.volume = volume;
		this.applyMix();
	}

	private voice(clip: PlayableClip): Voice {
		let voice = this.voices.get(clip.id);
		if (voice) return voice;
		const context = this.context!;
		const element = new Audio(`/api/clips/${clip.id}/proxy`);
		element.preload = 'auto';
		element.preservesPitch = false;
		const source = context.createMediaElementSource(element);
		const gain = context.createGain();
		const panner = context.createStereoPanner();
		source.connect(gain).connect(panner).connect(context.destination);
		voice = { element, gain, panner, startTimer: null };
		this.voices.set(clip.id, voice);
		return voice;
	}

	private applyMix(): void {
		for (const [id, voice] of this.voices) {
			voice.gain.gain.value = this.audible(id) ? this.volume : 0;
			voice.panner.pan.value = this.twoEar.on ? (id === this.twoEar.left ? -1 : id === this.twoEar.right ? 1 : 0) : 0;
		}
	}

	get now(): number {
		if (!this.playing || !this.context) return this.startSession;
		return this.startSession + (this.context.currentTime - this.startClock);
	}

	async play(fromSession: number): Promise<void> {
		this.context ??= new AudioContext();
		await this.context.resume();
		this.startSession = fromSession;
		this.startClock = this.context.currentTime;
		this.playing = true;
		for (const clip of this.clips()) this.place(clip, fromSession);
		this.applyMix();
		const tick = () => {
			if (!this.playing) return;
			const now = this.now;
			this.onTime(now);
			if (now - this.lastResync > 0.5) {
				this.lastResync = now;
				for (const clip of this.clips()) this.place(clip, now, true);
			}
			this.frame = requestAnimationFrame(tick);
		};
		this.frame = requestAnimationFrame(tick);
	}

	/** Starts, moves or stops one lane so that it sounds what the playhead is over. */
	private place(clip: PlayableClip, sessionSeconds: number, onlyIfOff = false): void {
		const voice = this.voice(clip);
		const clipTime = clipTimeOf(sessionSeconds, clip);
		voice.element.playbackRate = 1 / (1 + clip.driftPpm * 1e-6);
		if (clipTime >= clip.durationSeconds) {
			voice.element.pause();
			return;
		}
		if (clipTime < 0) {
			voice.element.pause();
			if (!voice.startTimer) {
				voice.startTimer = setTimeout(() => {
					voice.startTimer = null;
					if (this.playing) this.place(clip, this.now);
				}, -clipTime * 1000);
			}
			return;
		}
		if (onlyIfOff && !voice.element.paused && Math.abs(voice.element.currentTime - clipTime) < RESYNC_SECONDS) return;
		voice.element.currentTime = clipTime;
		if (voice.element.paused) void voice.element.play().catch(() => {});
	}

	pause(): void {
		this.startSession = this.now;
		this.playing = false;
		cancelAnimationFrame(this.frame);
		for (const voice of this.voices.values()) {
			voice.element.pause();
			if (voice.startTimer) clearTimeout(voice.startTimer);
			voice.startTimer = null;
		}
	}

	/** After a nudge or a seek during playback: every lane re-placed at once. */
	resync(sessionSeconds = this.now): void {
		if (!this.playing) return;
		this.startSession = sessionSeconds;
		this.startClock = this.context!.currentTime;
		for (const clip of this.clips()) this.place(clip, sessionSeconds);
	}

	destroy(): void {
		this.pause();
		for (const voice of this.voices.values()) voice.element.src = '';
		this.voices.clear();
		void this.context?.close();
	}
}
