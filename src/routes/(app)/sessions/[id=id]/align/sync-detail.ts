/*
 * The engine's evidence for a clip, as the align job stores it in syncDetailJson: per pair
 * the coarse peak, the windowed offsets the drift line was fitted to and the coarse
 * correlation around the chosen lag with its runner-ups. Read defensively: older results
 * may lack fields (results from before the correlation was kept have none).
 */

export interface SyncWindow {
	timeSeconds: number;
	lagSeconds: number;
	coherence: number;
	peakToSidelobe: number;
	inlier: boolean;
}

export interface SyncCorrelation {
	segmentCenterSeconds: number;
	chosenLagSeconds: number;
	startLagSeconds: number;
	stepSeconds: number;
	/** Relative to the chosen peak (1). */
	values: number[];
	runnersUp: { lagSeconds: number; relativeHeight: number }[];
}

export interface SyncPair {
	a: string;
	b: string;
	matched: boolean;
	confidence: number;
	offsetSeconds: number | null;
	driftPpm: number | null;
	coarse: { lagSeconds: number; peakToSidelobe: number; supportingSegments?: number; segments?: number } | null;
	windows: SyncWindow[];
	correlation: SyncCorrelation | null;
}

const isRecord = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null;
const num = (v: unknown): number | null => (typeof v === 'number' && Number.isFinite(v) ? v : null);

function readWindow(v: unknown): SyncWindow | null {
	if (!isRecord(v)) return null;
	const timeSeconds = num(v.timeSeconds);
	const lagSeconds = num(v.lagSeconds);
	if (timeSeconds === null || lagSeconds === null) return null;
	return { timeSeconds, lagSeconds, coherence: num(v.coherence) ?? 0, peakToSidelobe: num(v.peakToSidelobe) ?? 0, inlier: v.inlier !== false };
}

function readCorrelation(v: unknown): SyncCorrelation | null {
	if (!isRecord(v) || !Array.isArray(v.values)) return null;
	const chosenLagSeconds = num(v.chosenLagSeconds);
	const startLagSeconds = num(v.startLagSeconds);
	const stepSeconds = num(v.stepSeconds);
	if (chosenLagSeconds === null || startLagSeconds === null || stepSeconds === null || stepSeconds <= 0) return null;
	return {
		segmentCenterSeconds: num(v.segmentCenterSeconds) ?? 0,
		chosenLagSeconds,
		startLagSeconds,
		stepSeconds,
		values: v.values.map((x) => num(x) ?? 0),
		runnersUp: (Array.isArray(v.runnersUp) ? v.runnersUp : []).flatMap((r) => {
			const lagSeconds = isRecord(r) ? num(r.lagSeconds) : null;
			const relativeHeight = isRecord(r) ? num(r.relativeHeight) : null;
			return lagSeconds === null || relativeHeight === null ? [] : [{ lagSeconds, relativeHeight }];
		})
	};
}

export function pairsOf(detail: Record<string, unknown> | null): SyncPair[] {
	const pairs = detail && Array.isArray(detail.pairs) ? detail.pairs : [];
	return pairs.filter(isRecord).flatMap((p) => {
		if (typeof p.a !== 'string' || typeof p.b !== 'string') return [];
		const coarse = isRecord(p.coarse) && num(p.coarse.lagSeconds) !== null ? p.coarse : null;
		return [
			{
				a: p.a,
				b: p.b,
				matched: p.matched === true,
				confidence: num(p.confidence) ?? 0,
				offsetSeconds: num(p.offsetSeconds),
				driftPpm: num(p.driftPpm),
				coarse: coarse
					? {
							lagSeconds: num(coarse.lagSeconds)!,
							peakToSidelobe: num(coarse.peakToSidelobe) ?? 0,
							supportingSegments: num(coarse.supportingSegments) ?? undefined,
							segments: num(coarse.segments) ?? undefined
						}
					: null,
				windows: (Array.isArray(p.windows) ? p.windows : []).map(readWindow).filter((w): w is SyncWindow => w !== null),
				correlation: readCorrelation(p.correlation)
			}
		];
	});
}
