import type { PairEstimate } from './pair';

/** A pairwise measurement between clips a and b: timeA = offset + timeB × (1 + drift·1e-6). */
export interface ClipLink {
	a: number;
	b: number;
	estimate: Pick<
		PairEstimate,
		'matched' | 'confidence' | 'driftPpm' | 'driftMeasured' | 'referenceTimeSeconds' | 'offsetAtReferenceSeconds' | 'offsetStdSeconds' | 'driftStdPpm'
	>;
}

export interface SolvedClip {
	matched: boolean;
	/** null when the clip could not be placed (no common sound with the others). */
	offsetSeconds: number | null;
	driftPpm: number | null;
	driftMeasured: boolean;
	confidence: number;
}

export interface LinkResidual {
	a: number;
	b: number;
	/** How far the solution misses this pair's measurement, at the pair's best-known instant. */
	offsetResidualMs: number;
	driftResidualPpm: number | null;
	/** false when the link was left out as inconsistent with the rest (or was unmatched). */
	used: boolean;
}

export interface SessionSolution {
	referenceIndex: number;
	clips: SolvedClip[];
	links: LinkResidual[];
	/** Largest offset residual over the links used, in ms: how much the pairs disagree. */
	maxInconsistencyMs: number;
	notes: string[];
}

export interface SolveOptions {
	referenceIndex?: number;
	/** Links missing the joint solution by more than this (and not needed to connect a clip) are dropped. */
	rejectResidualSeconds?: number;
}

/** The clip that overlaps (shares sound with) the most others; ties go to the higher total confidence, then the first. */
export function chooseReference(clipCount: number, links: ClipLink[]): number {
	let best = 0;
	let bestKey = [-1, -1];
	for (let i = 0; i < clipCount; i++) {
		const mine = links.filter((l) => l.estimate.matched && (l.a === i || l.b === i));
		const key = [mine.length, mine.reduce((s, l) => s + l.estimate.confidence, 0)];
		if (key[0] > bestKey[0] || (key[0] === bestKey[0] && key[1] > bestKey[1] + 1e-9)) {
			best = i;
			bestKey = key;
		}
	}
	return best;
}

interface Equation {
	a: number;
	b: number;
	/** x_b − x_a = value, with this weight. */
	value: number;
	weight: number;
}

/** Weighted least squares on a graph: x_b − x_a ≈ value, with x fixed to 0 at the anchors. */
function solveDifferences(count: number, anchors: number[], equations: Equation[]): Float64Array {
	const unknown = new Map<number, number>();
	for (let i = 0; i < count; i++) if (!anchors.includes(i)) unknown.set(i, unknown.size);
	const n = unknown.size;
	const matrix = Array.from({ length: n }, () => new Float64Array(n + 1));
	for (const e of equations) {
		const ia = unknown.get(e.a);
		const ib = unknown.get(e.b);
		if (ib !== undefined) {
			matrix[ib][ib] += e.weight;
			matrix[ib][n] += e.weight * e.value;
		}
		if (ia !== undefined) {
			matrix[ia][ia] += e.weight;
			matrix[ia][n] -= e.weight * e.value;
		}
		if (ia !== undefined && ib !== undefined) {
			matrix[ia][ib] -= e.weight;
			matrix[ib][ia] -= e.weight;
		}
	}
	for (let col = 0; col < n; col++) {
		let pivot = col;
		for (let row = col + 1; row < n; row++) if (Math.abs(matrix[row][col]) > Math.abs(matrix[pivot][col])) pivot = row;
		[matrix[col], matrix[pivot]] = [matrix[pivot], matrix[col]];
		const p = matrix[col][col];
		if (p === 0) continue;
		for (let row = 0; row < n; row++) {
			if (row === col) continue;
			const factor = matrix[row][col] / p;
			if (factor === 0) continue;
			for (let k = col; k <= n; k++) matrix[row][k] -= factor * matrix[col][k];
		}
	}
	const x = new Float64Array(count);
	for (const [node, i] of unknown) x[node] = matrix[i][i] === 0 ? 0 : matrix[i][n] / matrix[i][i];
	return x;
}

function componentOf(start: number, links: ClipLink[]): Set<number> {
	const seen = new Set([start]);
	const queue = [start];
	for (let head = 0; head < queue.length; head++) {
		const node = queue[head];
		for (const l of links) {
			const other = l.a === node ? l.b : l.b === node ? l.a : -1;
			if (other >= 0 && !seen.has(other)) {
				seen.add(other);
				queue.push(other);
			}
		}
	}
	return seen;
}

/**
 * Places every clip on the session timeline from all pairwise measurements at once: first the
 * clock rates (log-rate differences, weighted least squares), then the offsets at each pair's
 * best-known instant. A clip that shares sound only with a non-reference clip is still placed
 * through it; links that contradict the rest are reported and, when redundant, left out.
 */
export function solveSession(clipCount: number, links: ClipLink[], options: SolveOptions = {}): SessionSolution {
	const referenceIndex = options.referenceIndex ?? chooseReference(clipCount, links);
	const rejectResidual = options.rejectResidualSeconds ?? 2e-3;
	const notes: string[] = [];
	let active = links.filter((l) => l.estimate.matched && Number.isFinite(l.estimate.offsetAtReferenceSeconds));
	if (active.length > 0 && !active.some((l) => l.a === referenceIndex || l.b === referenceIndex)) {
		notes.push(`the reference (clip ${referenceIndex}) shares no sound with the others, so none of them can be placed`);
	}

	for (;;) {
		const placed = componentOf(referenceIndex, active);
		const slopeLinks = active.filter((l) => l.estimate.driftMeasured);
		const slopeComponent = componentOf(referenceIndex, slopeLinks);
		const slopeAnchors = [...Array(clipCount).keys()].filter((i) => !slopeComponent.has(i));
		const logRate = solveDifferences(
			clipCount,
			[referenceIndex, ...slopeAnchors],
			slopeLinks
				.filter((l) => slopeComponent.has(l.a))
				.map((l) => ({
					a: l.a,
					b: l.b,
					value: Math.log1p(l.estimate.driftPpm * 1e-6),
					weight: 1 / Math.max(l.estimate.driftStdPpm * 1e-6, 0.02e-6) ** 2
				}))
		);
		const rate = Array.from(logRate, (x) => Math.exp(x));
		const offsetAnchors = [...Array(clipCount).keys()].filter((i) => !placed.has(i));
		const offsetEquations = active
			.filter((l) => placed.has(l.a))
			.map((l) => {
				const u = l.estimate.referenceTimeSeconds;
				return {
					a: l.a,
					b: l.b,
					value: rate[l.a] * (u + l.estimate.offsetAtReferenceSeconds) - rate[l.b] * u,
					weight: 1 / Math.max(l.estimate.offsetStdSeconds, 20e-6) ** 2
				};
			});
		const offset = solveDifferences(clipCount, [referenceIndex, ...offsetAnchors], offsetEquations);

		const residuals: LinkResidual[] = links.map((l) => {
			const u = l.estimate.referenceTimeSeconds;
			const used = active.includes(l);
			if (!Number.isFinite(l.estimate.offsetAtReferenceSeconds) || !placed.has(l.a) || !placed.has(l.b)) {
				return { a: l.a, b: l.b, offsetResidualMs: Number.NaN, driftResidualPpm: null, used: false };
			}
			const predicted = (offset[l.b] + rate[l.b] * u - offset[l.a]) / rate[l.a] - u;
			return {
				a: l.a,
				b: l.b,
				offsetResidualMs: (predicted - l.estimate.offsetAtReferenceSeconds) * 1e3,
				driftResidualPpm: l.estimate.driftMeasured ? ((rate[l.b] / rate[l.a] - 1) * 1e6 - l.estimate.driftPpm) : null,
				used
			};
		});

		// Drop the worst-fitting redundant link and solve again.
		const worst = active
			.map((l) => ({ l, r: residuals[links.indexOf(l)] }))
			.filter(({ r }) => Math.abs(r.offsetResidualMs) > rejectResidual * 1e3)
			.sort((x, y) => Math.abs(y.r.offsetResidualMs) / Math.max(y.l.estimate.offsetStdSeconds, 20e-6) - Math.abs(x.r.offsetResidualMs) / Math.max(x.l.estimate.offsetStdSeconds, 20e-6))
			.find(({ l }) => componentOf(referenceIndex, active.filter((k) => k !== l)).size === placed.size);
		if (worst) {
			notes.push(`pair ${worst.l.a}–${worst.l.b} disagrees with the others by ${Math.abs(worst.r.offsetResidualMs).toFixed(2)} ms and was left out`);
			active = active.filter((l) => l !== worst.l);
			continue;
		}

		const clips: SolvedClip[] = [...Array(clipCount).keys()].map((i) => {
			const mine = links.filter((l) => l.a === i || l.b === i);
			const usedConfidence = active.filter((l) => l.a === i || l.b === i).map((l) => l.estimate.confidence);
			const bestAny = mine.reduce((m, l) => Math.max(m, l.estimate.confidence), 0);
			if (!placed.has(i)) return { matched: false, offsetSeconds: null, driftPpm: null, driftMeasured: false, confidence: bestAny };
			return {
				matched: true,
				offsetSeconds: offset[i],
				driftPpm: (rate[i] - 1) * 1e6,
				driftMeasured: i === referenceIndex || slopeComponent.has(i),
				// The reference alone on its timeline is certain only when it is the only clip.
				confidence: usedConfidence.length ? Math.max(...usedConfidence) : clipCount === 1 ? 1 : 0
			};
		});
		const usedResiduals = residuals.filter((r) => r.used).map((r) => Math.abs(r.offsetResidualMs));
		return {
			referenceIndex,
			clips,
			links: residuals,
			maxInconsistencyMs: usedResiduals.length ? Math.max(...usedResiduals) : 0,
			notes
		};
	}
}
