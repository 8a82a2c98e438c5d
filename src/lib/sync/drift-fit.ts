/** A windowed offset measurement: at clip time x (s) the other clip is y seconds ahead. */
export interface LinePoint {
	x: number;
	y: number;
}

export interface Line {
	slope: number;
	intercept: number;
}

function median(values: number[]): number {
	if (values.length === 0) return Number.NaN;
	const sorted = [...values].sort((a, b) => a - b);
	const middle = sorted.length >> 1;
	return sorted.length % 2 ? sorted[middle] : 0.5 * (sorted[middle - 1] + sorted[middle]);
}

/**
 * Theil–Sen line (H. Theil 1950; P. K. Sen 1968): the median of all pairwise slopes, then the
 * median intercept. Robust to about 29 % of points being wrong.
 */
export function theilSen(points: LinePoint[]): Line {
	const slopes: number[] = [];
	for (let i = 0; i < points.length; i++) {
		for (let j = i + 1; j < points.length; j++) {
			const dx = points[j].x - points[i].x;
			if (dx !== 0) slopes.push((points[j].y - points[i].y) / dx);
		}
	}
	const slope = slopes.length ? median(slopes) : 0;
	const intercept = median(points.map((p) => p.y - slope * p.x));
	return { slope, intercept };
}

export interface DriftFitOptions {
	/** Points further than this from the robust line are outliers (seconds). */
	inlierToleranceSeconds: number;
	/** Below this span of x (seconds) or this many inliers the slope is not measured and stays 0. */
	minSpanSeconds: number;
	minPointsForSlope: number;
	/** A slope known worse than this (standard error, ppm) is not reported: drift stays 0. */
	maxSlopeStdPpm: number;
	/** Never report a slope beyond this (|slope| × 1e6 ppm). */
	maxDriftPpm: number;
}

export interface DriftFit {
	/** y at x = 0 and the slope: y = offsetSeconds + slope·x. */
	offsetSeconds: number;
	slope: number;
	driftMeasured: boolean;
	inliers: boolean[];
	inlierCount: number;
	/** Mean x of the inliers, where the offset is best known, and the offset there. */
	centerX: number;
	offsetAtCenterSeconds: number;
	residualRmsSeconds: number;
	offsetStdSeconds: number;
	slopeStd: number;
}

export const defaultDriftFitOptions: DriftFitOptions = {
	inlierToleranceSeconds: 0.5e-3,
	minSpanSeconds: 8,
	minPointsForSlope: 5,
	maxSlopeStdPpm: 3,
	maxDriftPpm: 300
};

/**
 * Robust offset-and-drift fit of windowed offsets: Theil–Sen picks the line and the inliers,
 * then least squares on the inliers gives the estimate and its standard errors.
 */
export function fitDrift(points: LinePoint[], options: DriftFitOptions = defaultDriftFitOptions): DriftFit {
	const empty: DriftFit = {
		offsetSeconds: Number.NaN,
		slope: 0,
		driftMeasured: false,
		inliers: points.map(() => false),
		inlierCount: 0,
		centerX: Number.NaN,
		offsetAtCenterSeconds: Number.NaN,
		residualRmsSeconds: Number.NaN,
		offsetStdSeconds: Number.POSITIVE_INFINITY,
		slopeStd: Number.POSITIVE_INFINITY
	};
	if (points.length === 0) return empty;
	const xs = points.map((p) => p.x);
	const span = Math.max(...xs) - Math.min(...xs);
	const canMeasureSlope = points.length >= options.minPointsForSlope && span >= options.minSpanSeconds;
	const maxSlope = options.maxDriftPpm * 1e-6;

	let robust: Line = canMeasureSlope ? theilSen(points) : { slope: 0, intercept: median(points.map((p) => p.y)) };
	if (Math.abs(robust.slope) > maxSlope) robust = { slope: 0, intercept: median(points.map((p) => p.y)) };
	const inliers = points.map((p) => Math.abs(p.y - (robust.intercept + robust.slope * p.x)) <= options.inlierToleranceSeconds);
	const chosen = points.filter((_, i) => inliers[i]);
	if (chosen.length === 0) return { ...empty, inliers };

	const centerX = chosen.reduce((s, p) => s + p.x, 0) / chosen.length;
	const meanY = chosen.reduce((s, p) => s + p.y, 0) / chosen.length;
	let sxx = 0;
	let sxy = 0;
	for (const p of chosen) {
		sxx += (p.x - centerX) ** 2;
		sxy += (p.x - centerX) * (p.y - meanY);
	}
	const chosenSpan = Math.max(...chosen.map((p) => p.x)) - Math.min(...chosen.map((p) => p.x));
	let driftMeasured = canMeasureSlope && chosen.length >= options.minPointsForSlope && chosenSpan >= options.minSpanSeconds && sxx > 0;
	let slope = driftMeasured ? sxy / sxx : 0;
	if (Math.abs(slope) > maxSlope) slope = 0;
	const residualSigma = (withSlope: number, parameters: number) => {
		let squares = 0;
		for (const p of chosen) squares += (p.y - meanY - withSlope * (p.x - centerX)) ** 2;
		// A floor on the residual keeps a lucky near-perfect fit from claiming infinite precision.
		return { squares, sigma: Math.max(Math.sqrt(squares / Math.max(chosen.length - parameters, 1)), 10e-6) };
	};
	let { squares, sigma } = residualSigma(slope, driftMeasured ? 2 : 1);
	if (driftMeasured && (sigma / Math.sqrt(sxx)) * 1e6 > options.maxSlopeStdPpm) {
		driftMeasured = false;
		slope = 0;
		({ squares, sigma } = residualSigma(0, 1));
	}
	return {
		offsetSeconds: meanY - slope * centerX,
		slope,
		driftMeasured: driftMeasured && slope !== 0,
		inliers,
		inlierCount: chosen.length,
		centerX,
		offsetAtCenterSeconds: meanY,
		residualRmsSeconds: Math.sqrt(squares / chosen.length),
		offsetStdSeconds: sigma / Math.sqrt(chosen.length),
		slopeStd: driftMeasured ? sigma / Math.sqrt(sxx) : Number.POSITIVE_INFINITY
	};
}
