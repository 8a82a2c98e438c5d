import type { FrameTiming } from './frames';
import type { TableClipInput, TimingTableInput } from './timing-table';

/** A rig like DESIGN.md's demo: 59.94, 50 and 30 fps, started 2.5 s and 8.8 s apart, ±45 ppm. */
export function demoRig(): TableClipInput[] {
	const constant = (num: number, den: number, seconds: number): FrameTiming => ({
		kind: 'constant',
		frameRate: { num, den },
		firstFrameSeconds: 0,
		frameCount: Math.floor((seconds * num) / den)
	});
	return [
		{ id: 'h', label: 'Rig high', position: 'high', fileName: 'high.mp4', isReference: true, placement: { offsetSeconds: 0, driftPpm: 0 }, frameRate: { num: 60000, den: 1001 }, variableFrameRate: false, frames: constant(60000, 1001, 86), embeddedTimecode: null },
		{ id: 'm', label: 'Rig mid', position: 'mid', fileName: 'mid.mp4', isReference: false, placement: { offsetSeconds: 2.4995, driftPpm: -45 }, frameRate: { num: 50, den: 1 }, variableFrameRate: false, frames: constant(50, 1, 82), embeddedTimecode: null },
		{ id: 'l', label: 'Rig low, "housing"', position: 'low', fileName: 'low, housed.mp4', isReference: false, placement: { offsetSeconds: 8.7989, driftPpm: 31 }, frameRate: { num: 30, den: 1 }, variableFrameRate: false, frames: constant(30, 1, 74), embeddedTimecode: null }
	];
}

export function demoInput(overrides: Partial<TimingTableInput> = {}): TimingTableInput {
	return {
		session: { id: 's1', name: 'Market Square fountain, lap 2', site: 'Market Square', captureDate: '2026-11-14', status: 'aligned', revision: 3 },
		usableSpan: { startSeconds: 8.8, endSeconds: 82.7 },
		clips: demoRig(),
		instants: { kind: 'every', everySeconds: 0.5 },
		...overrides
	};
}
