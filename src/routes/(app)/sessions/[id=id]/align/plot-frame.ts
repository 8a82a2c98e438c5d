import type uPlot from 'uplot';

/** A theme colour by its custom property, read when a plot is drawn so plots follow the theme. */
export function themeColour(name: string): string {
	return getComputedStyle(document.documentElement).getPropertyValue(name).trim();
}

/**
 * What the workbench's plots share: their height, a legend, zoom by dragging along x, a numeric
 * x scale, and axes in the theme's muted ink with mono numbers.
 */
export function plotFrame(width: number, xLabel: string, yLabel: string, yAxisSize: number): Omit<uPlot.Options, 'series'> {
	const grid = { stroke: themeColour('--ls-line'), width: 1 };
	const axis = { stroke: themeColour('--ls-muted'), grid, ticks: grid, font: '11px "JetBrains Mono", monospace', labelFont: '11px Inter, sans-serif' };
	return {
		width,
		height: 220,
		legend: { show: true },
		cursor: { drag: { x: true, y: false } },
		scales: { x: { time: false } },
		axes: [
			{ ...axis, label: xLabel },
			{ ...axis, label: yLabel, size: yAxisSize }
		]
	};
}
