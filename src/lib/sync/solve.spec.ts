import { describe, expect, it } from 'vitest';
import { chooseReference, solveSession, type ClipLink } from './solve';

interface TrueClip {
	offsetSeconds: number;
	driftPpm: number;
}

/** A perfect pair measurement between two clips with known placement, at B time u (DESIGN.md's formula). */
function link(a: number, b: number, clips: TrueClip[], u: number, extra: Partial<ClipLink['estimate']> = {}): ClipLink {
	const sa = 1 + clips[a].driftPpm * 1e-6;
	const sb = 1 + clips[b].driftPpm * 1e-6;
	const session = clips[b].offsetSeconds + sb * u;
	const timeA = (session - clips[a].offsetSeconds) / sa;
	return {
		a,
		b,
		estimate: {
			matched: true,
			confidence: 0.9,
			driftPpm: (sb / sa - 1) * 1e6,
			driftMeasured: true,
			referenceTimeSeconds: u,
			offsetAtReferenceSeconds: timeA - u,
			offsetStdSeconds: 20e-6,
			driftStdPpm: 0.05,
			...extra
		}
	};
}

describe('solveSession', () => {
	it('places a chain exactly, the third clip overlapping only the second, with minutes of offset and drift', () => {
		const truth: TrueClip[] = [
			{ offsetSeconds: 0, driftPpm: 0 },
			{ offsetSeconds: 183.25, driftPpm: 61 },
			{ offsetSeconds: 540.125, driftPpm: -37 }
		];
		const links = [link(0, 1, truth, 120, {}), link(1, 2, truth, 300)];
		const solution = solveSession(3, links, { referenceIndex: 0 });
		// Composition of affine maps is exact; no small-angle approximation (computed).
		for (const [i, clip] of solution.clips.entries()) {
			expect(clip.matched).toBe(true);
			expect(clip.offsetSeconds).toBeCloseTo(truth[i].offsetSeconds, 9);
			expect(clip.driftPpm).toBeCloseTo(truth[i].driftPpm, 6);
		}
		expect(solution.maxInconsistencyMs).toBeLessThan(1e-6);
	});

	it('reports and leaves out the one pair that contradicts a redundant loop', () => {
		const truth: TrueClip[] = [
			{ offsetSeconds: 0, driftPpm: 0 },
			{ offsetSeconds: 3.5, driftPpm: 20 },
			{ offsetSeconds: 7.25, driftPpm: -15 },
			{ offsetSeconds: 1.75, driftPpm: 40 }
		];
		const links = [link(0, 1, truth, 10), link(0, 2, truth, 10), link(1, 2, truth, 10), link(0, 3, truth, 10), link(2, 3, truth, 10), link(1, 3, truth, 10)];
		// Pair 1–2 is off by 40 ms, as a footstep-period confusion would be.
		links[2].estimate = { ...links[2].estimate, offsetAtReferenceSeconds: links[2].estimate.offsetAtReferenceSeconds + 0.04 };
		const solution = solveSession(4, links, { referenceIndex: 0 });
		const bad = solution.links.find((l) => l.a === 1 && l.b === 2);
		expect(bad?.used).toBe(false);
		expect(Math.abs(bad?.offsetResidualMs ?? 0)).toBeCloseTo(40, 3);
		expect(solution.notes.join(' ')).toMatch(/1–2 disagrees/);
		for (const [i, clip] of solution.clips.entries()) expect(clip.offsetSeconds).toBeCloseTo(truth[i].offsetSeconds, 7);
	});

	it('spreads an inconsistency it cannot resolve and reports its size', () => {
		const truth: TrueClip[] = [
			{ offsetSeconds: 0, driftPpm: 0 },
			{ offsetSeconds: 2, driftPpm: 0 },
			{ offsetSeconds: 4, driftPpm: 0 }
		];
		const links = [link(0, 1, truth, 5), link(1, 2, truth, 5), link(0, 2, truth, 5)];
		links[2].estimate = { ...links[2].estimate, offsetAtReferenceSeconds: links[2].estimate.offsetAtReferenceSeconds + 0.0015 };
		const solution = solveSession(3, links, { referenceIndex: 0 });
		// Equal weights on a three-edge loop share a 1.5 ms closure error: 0.5 ms on each edge (least squares, computed).
		expect(solution.maxInconsistencyMs).toBeCloseTo(0.5, 6);
		expect(solution.links.every((l) => l.used)).toBe(true);
	});

	it('gives drift 0 and says so for a clip placed only through a pair too short to measure drift', () => {
		const truth: TrueClip[] = [
			{ offsetSeconds: 0, driftPpm: 0 },
			{ offsetSeconds: 12, driftPpm: 25 },
			{ offsetSeconds: 30, driftPpm: 0 }
		];
		const links = [link(0, 1, truth, 40), link(1, 2, truth, 3, { driftMeasured: false, driftPpm: 0, driftStdPpm: Number.POSITIVE_INFINITY })];
		const solution = solveSession(3, links, { referenceIndex: 0 });
		expect(solution.clips[1]).toMatchObject({ matched: true, driftMeasured: true });
		expect(solution.clips[2]).toMatchObject({ matched: true, driftMeasured: false, driftPpm: 0 });
		// Its clock runs with the reference's here, so the measurement at u = 3 s places it exactly (computed).
		expect(solution.clips[2].offsetSeconds).toBeCloseTo(30, 9);
		expect(solution.clips[1].driftPpm).toBeCloseTo(25, 6);
	});

	it('leaves a clip without common sound off the timeline and picks the best-connected reference', () => {
		const truth: TrueClip[] = [
			{ offsetSeconds: 0, driftPpm: 0 },
			{ offsetSeconds: 1, driftPpm: 0 },
			{ offsetSeconds: 2, driftPpm: 0 },
			{ offsetSeconds: 0, driftPpm: 0 }
		];
		const links = [link(0, 1, truth, 5), link(1, 2, truth, 5), link(1, 3, truth, 5, { matched: false, confidence: 0.1 })];
		expect(chooseReference(4, links)).toBe(1);
		const solution = solveSession(4, links);
		expect(solution.referenceIndex).toBe(1);
		expect(solution.clips[1].offsetSeconds).toBe(0);
		expect(solution.clips[0].offsetSeconds).toBeCloseTo(-1, 9);
		expect(solution.clips[3]).toMatchObject({ matched: false, offsetSeconds: null, driftPpm: null });
	});
});
