import { estimatePair, prepareTrack, type AnalysisTrack, type PairEstimate, type PairOptions } from '../../sync/pair';
import type { PcmTrack } from '../../sync/types';

/** Work the alignment hands to a worker thread; PCM lives in shared memory, so nothing large is copied. */
export type AlignTask =
	| { kind: 'prepare'; pcm: PcmTrack; options: PairOptions }
	| { kind: 'pair'; a: AnalysisTrack; b: AnalysisTrack; options: PairOptions };

export type AlignTaskResult = { kind: 'prepare'; track: AnalysisTrack } | { kind: 'pair'; estimate: PairEstimate };

export function runAlignTask(task: AlignTask): AlignTaskResult {
	return task.kind === 'prepare'
		? { kind: 'prepare', track: prepareTrack(task.pcm, task.options) }
		: { kind: 'pair', estimate: estimatePair(task.a, task.b, task.options) };
}

export default runAlignTask;
