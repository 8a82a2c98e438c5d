import { describe, expect, it } from 'vitest';
import { estimatePair, prepareTrack } from './pair';
import { footsteps, randomScene, renderClip } from './test-signals';

const sampleRate = 8000;

function clip(scene: ReturnType<typeof randomScene>, durationSeconds: number, offsetSeconds: number, driftPpm: number, seed: number) {
	return prepareTrack({
		samples: renderClip(scene, { sampleRate, durationSeconds, offsetSeconds, driftPpm, noise: 0.03, seed }),
		sampleRate,
		startSeconds: 0
	});
}

describe('estimatePair', () => {
	it('finds offset and drift of two clips of one scene (DESIGN.md formula, synthetic truth)', () => {
		const scene = randomScene(200, 21, 8);
		const a = clip(scene, 150, 10, 0, 1);
		const b = clip(scene, 120, 47.25, 60, 2);
		const estimate = estimatePair(a, b);
		// Scene time = 10 + tA = 47.25 + tB·(1 + 60e-6), so tA = 37.25 + tB·(1 + 60e-6) (computed).
		expect(estimate.matched).toBe(true);
		expect(estimate.confidence).toBeGreaterThan(0.9);
		expect(Math.abs(estimate.offsetSeconds - 37.25)).toBeLessThan(0.1e-3);
		expect(Math.abs(estimate.driftPpm - 60)).toBeLessThan(1);
		expect(estimate.driftMeasured).toBe(true);
		// The correlation kept for people: centred on the chosen lag, which is the slice's highest point.
		const view = estimate.correlation!;
		expect(view.chosenLagSeconds).toBeCloseTo(37.25 + view.segmentCenterSeconds * 60e-6, 3);
		expect(view.startLagSeconds).toBeCloseTo(view.chosenLagSeconds - 2, 1);
		expect(Math.max(...view.values)).toBe(1);
		expect(view.runnersUp).toHaveLength(3);
		for (const r of view.runnersUp) expect(r.relativeHeight).toBeLessThan(1);
	});

	it('honours each track’s start time on its clip timeline', () => {
		const scene = randomScene(200, 21, 8);
		const a = clip(scene, 150, 10, 0, 1);
		const b = prepareTrack({
			samples: renderClip(scene, { sampleRate, durationSeconds: 120, offsetSeconds: 47.25, driftPpm: 60, noise: 0.03, seed: 2 }),
			sampleRate,
			startSeconds: 1.25
		});
		const estimate = estimatePair(a, b);
		// Sample k now sits at clip time 1.25 + k/rate, so tA = 37.25 − 1.25·(1 + 60e-6) + tB·(1 + 60e-6) (computed).
		expect(Math.abs(estimate.offsetSeconds - (37.25 - 1.25 * (1 + 60e-6)))).toBeLessThan(0.1e-3);
	});

	it('does not match clips of different scenes, even with the same walking rhythm', () => {
		const sceneA = [...randomScene(100, 31, 4), ...footsteps(100, 0.55, 0.015, 32)].sort((x, y) => x.timeSeconds - y.timeSeconds);
		const sceneB = [...randomScene(100, 33, 4), ...footsteps(100, 0.55, 0.015, 34)].sort((x, y) => x.timeSeconds - y.timeSeconds);
		const estimate = estimatePair(clip(sceneA, 90, 0, 0, 3), clip(sceneB, 90, 0, 0, 4));
		expect(estimate.matched).toBe(false);
		expect(estimate.confidence).toBeLessThan(0.3);
	});

	it('is not pulled a step period off by loud footsteps', () => {
		// Steps dominate; the few other sounds (speech, birds) are quiet but unique.
		const scene = [...randomScene(100, 41, 3).map((burst) => ({ ...burst, amplitude: burst.amplitude * 0.3 })), ...footsteps(100, 0.55, 0.01, 42)].sort(
			(x, y) => x.timeSeconds - y.timeSeconds
		);
		const estimate = estimatePair(clip(scene, 80, 5, 0, 5), clip(scene, 70, 18.4, -30, 6));
		expect(estimate.matched).toBe(true);
		// tA = 13.4 + tB·(1 − 30e-6) (computed).
		expect(Math.abs(estimate.offsetSeconds - 13.4)).toBeLessThan(0.1e-3);
	});

	it('reports a muted microphone as unmatched', () => {
		const scene = randomScene(60, 51, 8);
		const muted = prepareTrack({ samples: new Float32Array(60 * sampleRate), sampleRate, startSeconds: 0 });
		const estimate = estimatePair(clip(scene, 60, 0, 0, 7), muted);
		expect(estimate.matched).toBe(false);
		expect(estimate.notes.join(' ')).toMatch(/muted/);
	});
});
