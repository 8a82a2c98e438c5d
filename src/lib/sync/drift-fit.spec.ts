import { describe, expect, it } from 'vitest';
import { fitDrift, theilSen, defaultDriftFitOptions } from './drift-fit';
import { seededRandom } from './test-signals';

describe('theilSen', () => {
	it('recovers a line exactly when fewer than ~29 % of points are wild', () => {
		// Theil 1950 / Sen 1968: the median of pairwise slopes ignores a minority of outliers (breakdown ≈ 29.3 %).
		const points = Array.from({ length: 20 }, (_, i) => ({ x: i, y: 3 + 0.5 * i }));
		for (const i of [2, 7, 11, 15, 18]) points[i].y += 100 * (i % 2 ? 1 : -1);
		const line = theilSen(points);
		expect(line.slope).toBeCloseTo(0.5, 12);
		expect(line.intercept).toBeCloseTo(3, 12);
	});
});

describe('fitDrift', () => {
	it('measures 43 ppm over ten minutes of windowed offsets with outliers and noise', () => {
		const random = seededRandom(4);
		const points = Array.from({ length: 48 }, (_, i) => {
			const x = 5 + i * 12.5;
			return { x, y: 2.5 + 43e-6 * x + (random() - 0.5) * 40e-6 };
		});
		// Footstep-like mismatches: whole periods away from the truth.
		points[3].y += 0.48;
		points[20].y -= 0.51;
		points[30].y += 0.013;
		const fit = fitDrift(points);
		expect(fit.driftMeasured).toBe(true);
		expect(fit.inliers.filter((x) => !x)).toHaveLength(3);
		// Least squares on uniform noise of ±20 µs over 600 s: slope error ≈ σ√(12/n)/T ≈ 0.02 ppm (computed).
		expect(Math.abs(fit.slope * 1e6 - 43)).toBeLessThan(0.2);
		expect(Math.abs(fit.offsetSeconds - 2.5)).toBeLessThan(30e-6);
	});

	it('leaves drift at 0 and says so when the span is too short to measure it', () => {
		const points = Array.from({ length: 8 }, (_, i) => ({ x: i * 0.8, y: 1.25 + 50e-6 * i * 0.8 }));
		const fit = fitDrift(points, defaultDriftFitOptions);
		expect(fit.driftMeasured).toBe(false);
		expect(fit.slope).toBe(0);
		// Mean of the points: 1.25 + 50e-6 × 2.8 (computed).
		expect(fit.offsetAtCenterSeconds).toBeCloseTo(1.25 + 50e-6 * 2.8, 9);
	});
});
