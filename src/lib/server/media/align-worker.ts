import type { OnsetEnvelope } from '../../sync/onset-envelope';
import { estimatePair, levelDbOf, type PairEstimate, type PairOptions } from '../../sync/pair';
import type { DecodedSound } from './decode';
import { soundEnvelope, soundSource } from './scratch-sound';

/** A decoded clip with its envelope: all a pair needs, as plain data a worker thread can be sent. */
export interface PreparedSound {
	sound: DecodedSound;
	envelope: OnsetEnvelope;
	levelDb: number;
}

/** Work the alignment hands to a worker thread; the sound stays in its scratch file, so nothing large is copied. */
export type AlignTask =
	| { kind: 'prepare'; sound: DecodedSound; options: PairOptions }
	| { kind: 'pair'; a: PreparedSound; b: PreparedSound; options: PairOptions };

export type AlignTaskResult = { kind: 'prepare'; prepared: PreparedSound } | { kind: 'pair'; estimate: PairEstimate };

export function runAlignTask(task: AlignTask): AlignTaskResult {
	if (task.kind === 'prepare') {
		const envelope = soundEnvelope(task.sound, task.options);
		return { kind: 'prepare', prepared: { sound: task.sound, envelope, levelDb: levelDbOf(envelope) } };
	}
	const a = soundSource(task.a.sound);
	const b = soundSource(task.b.sound);
	try {
		const estimate = estimatePair({ ...task.a, pcm: a }, { ...task.b, pcm: b }, task.options);
		return { kind: 'pair', estimate };
	} finally {
		a.close();
		b.close();
	}
}

export default runAlignTask;
