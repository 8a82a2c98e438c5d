import type { OnsetEnvelope } from '../../sync/onset-envelope';
import { estimatePair, type PairEstimate, type PairOptions } from '../../sync/pair';
import type { DecodedSound } from './decode';
import { soundSource } from './scratch-sound';

/** A decoded clip with its envelope: all a pair needs, as plain data a worker thread can be sent. */
export interface PreparedSound {
	sound: DecodedSound;
	envelope: OnsetEnvelope;
	levelDb: number;
}

/** A pair the alignment hands to a worker thread; the sound stays in its scratch file, so nothing large is copied. */
export interface AlignTask {
	a: PreparedSound;
	b: PreparedSound;
	options: PairOptions;
}

export interface AlignTaskResult {
	estimate: PairEstimate;
}

export function runAlignTask(task: AlignTask): AlignTaskResult {
	const a = soundSource(task.a.sound);
	const b = soundSource(task.b.sound);
	try {
		return { estimate: estimatePair({ ...task.a, pcm: a }, { ...task.b, pcm: b }, task.options) };
	} finally {
		a.close();
		b.close();
	}
}

export default runAlignTask;
