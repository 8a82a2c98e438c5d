import { estimatePair, prepareTrack, type AnalysisTrack, type PairEstimate, type PairOptions } from '../../sync/pair';
import type { PcmTrack } from '../../sync/types';

/** Work the alignment hands to a worker thread; PCM lives in shared memory, so nothing large is copied. */
export type AlignTask =
	| { kind: 'prepare'; pcm: PcmTrack; options: PairOptions }
	| { kind: 'pair'; a: AnalysisTrack; b: AnalysisTrack; options: PairOptions };

export function runAlignTask(task: AlignTask): AnalysisTrack | PairEstimate {
	return task.kind === 'prepare' ? prepareTrack(task.pcm, task.options) : estimatePair(task.a, task.b, task.options);
}

export default runAlignTask;
