import { describe, expect, it } from 'vitest';
import { frameTimeSeconds, sessionTimeOf } from './frames';
import { demoInput, demoRig } from './timing-table.test-rig';
import { buildTimingTable, columnKeys, defaultToleranceMs, frameTimingOfStored, instantsOf, TimingTableError, type TableClipInput } from './timing-table';

describe('instants', () => {
	it('every S seconds: start + k·S up to the end of the usable span', () => {
		const instants = instantsOf(demoInput());
		// floor((82.7 − 8.8) / 0.5) + 1 = 148 instants (computed).
		expect(instants).toHaveLength(148);
		expect(instants[0]).toBe(8.8);
		expect(instants[147]).toBeCloseTo(82.3, 9);
		expect(instants[100]).toBe(8.8 + 100 * 0.5);
	});

	it('a count spread evenly, both ends included; one instant is the middle', () => {
		const instants = instantsOf(demoInput({ instants: { kind: 'count', count: 120 } }));
		expect(instants).toHaveLength(120);
		expect(instants[0]).toBe(8.8);
		expect(instants[119]).toBeCloseTo(82.7, 9);
		expect(instants[1] - instants[0]).toBeCloseTo(73.9 / 119, 9);
		expect(instantsOf(demoInput({ instants: { kind: 'count', count: 1 } }))[0]).toBeCloseTo(45.75, 12);
	});

	it('every frame of one camera inside the span', () => {
		const input = demoInput({ instants: { kind: 'frames', clipId: 'l' } });
		const instants = instantsOf(input);
		const low = demoRig()[2];
		// Frame 0 is at 8.7989 s, before the span; the last inside is floor((82.7 − 8.7989)/(1 + 31e-6) × 30) = 2216 (computed).
		expect(instants).toHaveLength(2216);
		expect(instants[0]).toBeGreaterThanOrEqual(8.8 - 1e-9);
		expect(instants.at(-1)!).toBeLessThanOrEqual(82.7 + 1e-9);
		expect(instants[0] - (1 / 30) * (1 + 31e-6)).toBeLessThan(8.8);
		expect(instants[1]).toBeCloseTo(sessionTimeOf(frameTimeSeconds(1, low.frames), low.placement) + (instants[0] - sessionTimeOf(0, low.placement)), 9);
	});

	it('refuses too many rows, a zero interval and an unknown camera', () => {
		expect(() => instantsOf(demoInput({ instants: { kind: 'every', everySeconds: 0.0001 } }))).toThrow(TimingTableError);
		expect(() => instantsOf(demoInput({ instants: { kind: 'every', everySeconds: 0 } }))).toThrow(/at least 0.001/);
		expect(() => instantsOf(demoInput({ instants: { kind: 'count', count: 300_000 } }))).toThrow(/more than/);
		expect(() => instantsOf(demoInput({ instants: { kind: 'frames', clipId: 'nope' } }))).toThrow(/Choose one/);
	});
});

describe('buildTimingTable', () => {
	it('gives each camera its nearest frame, residuals within half its own frame', () => {
		const table = buildTimingTable(demoInput());
		expect(table.rows).toHaveLength(148);
		const halfFrameMs = [1001 / 60000 / 2, 1 / 50 / 2, 1 / 30 / 2].map((s) => s * 1000);
		for (const row of table.rows) {
			row.cells.forEach((cell, c) => {
				expect(cell).not.toBeNull();
				// DESIGN.md: the nearest frame is within half a frame of the instant (+ rounding to 1 µs).
				expect(Math.abs(cell!.residualMs)).toBeLessThanOrEqual(halfFrameMs[c] + 0.001);
			});
			expect(row.worstResidualMs).toBe(Math.max(...row.cells.map((c) => Math.abs(c!.residualMs))));
		}
		// Half a frame at 30 fps = 16.667 ms (computed): constant cameras never exceed it.
		expect(table.toleranceMs).toBe(16.667);
		expect(table.summary.flaggedCount).toBe(0);
		expect(table.approved).toBe(false);
	});

	it('maps an instant through offset and drift by hand', () => {
		const table = buildTimingTable(demoInput());
		const row = table.rows[10]; // 8.8 + 5 = 13.8 s
		expect(row.sessionSeconds).toBe(13.8);
		// mid: clipTime = (13.8 − 2.4995) / (1 − 45e-6) = 11.3010085… s → frame round(565.05) = 565 (computed).
		expect(row.cells[1]!.index).toBe(565);
		expect(row.cells[1]!.timeSeconds).toBe(11.3);
		expect(row.cells[1]!.timecode).toBe('00:00:11:15');
		// Residual = 2.4995 + 11.3 × (1 − 45e-6) − 13.8 = −0.0010085 s, written to the µs (computed).
		expect(Math.abs(row.cells[1]!.residualMs + 1.0085)).toBeLessThanOrEqual(0.0005 + 1e-9);
	});

	it('describes each clip: usable span in clip time, first and last frames with time codes', () => {
		const table = buildTimingTable(demoInput());
		const [high, mid, low] = table.clips;
		expect(high.key).toBe('rig_high');
		expect(low.key).toBe('rig_low_housing');
		expect(high.dropFrame).toBe(true);
		expect(mid.dropFrame).toBe(false);
		// high is the reference: clip time = session time; 8.8 s × 60000/1001 = 527.47 → frame 527 = 00:00:08;47 (computed).
		expect(high.usableSpan).toEqual({ startSeconds: 8.8, endSeconds: 82.7 });
		expect(high.firstFrame).toEqual({ index: 527, timeSeconds: 8.792117, timecode: '00:00:08;47' });
		expect(low.usableSpan.startSeconds).toBeCloseTo((8.8 - 8.7989) / (1 + 31e-6), 6);
		expect(low.firstFrame!.index).toBe(0);
		expect(mid.lastFrame!.index).toBe(Math.round(((82.7 - 2.4995) / (1 - 45e-6)) * 50));
	});

	it('honours an embedded start time code', () => {
		const rig = demoRig();
		rig[0] = { ...rig[0], embeddedTimecode: '10:00:00;00' };
		const table = buildTimingTable(demoInput({ clips: rig }));
		expect(table.clips[0].startTimecode).toBe('10:00:00;00');
		expect(table.clips[0].embeddedTimecode).toBe(true);
		expect(table.clips[0].firstFrame!.timecode).toBe('10:00:08;47');
	});

	it('finds frames of a variable-rate clip by their timestamps and flags a dropped frame', () => {
		// 30 fps nominal with one frame missing after 0.5 s: the instant in the hole is 33 ms from any frame.
		const times = Array.from({ length: 90 }, (_, i) => i / 30).filter((_, i) => i !== 16);
		const phone: TableClipInput = {
			id: 'p', label: 'Phone', position: 'other', fileName: 'phone.mp4', isReference: false,
			placement: { offsetSeconds: 0, driftPpm: 0 }, frameRate: { num: 30, den: 1 }, variableFrameRate: true,
			frames: { kind: 'variable', frameTimesSeconds: times }, embeddedTimecode: null
		};
		const table = buildTimingTable(demoInput({ clips: [phone], usableSpan: { startSeconds: 0, endSeconds: 2.9 }, instants: { kind: 'every', everySeconds: 1 / 30 } }));
		const hole = table.rows[16];
		expect(hole.cells[0]!.index).toBe(15);
		expect(hole.cells[0]!.residualMs).toBeCloseTo(-33.333, 3);
		expect(hole.flagged).toBe(true);
		expect(table.rows[17].cells[0]!.index).toBe(16);
		expect(table.rows[17].cells[0]!.timecode).toBe('00:00:00:17');
		expect(table.summary.flaggedCount).toBe(1);
	});

	it('residual is zero for the camera whose frames are the instants', () => {
		const table = buildTimingTable(demoInput({ instants: { kind: 'frames', clipId: 'm' } }));
		const frames = table.rows.map((r) => r.cells[1]!.index);
		expect(frames.every((f, i) => i === 0 || f === frames[i - 1] + 1)).toBe(true);
		expect(table.rows.every((r) => r.cells[1]!.residualMs === 0)).toBe(true);
	});

	it('rejects an empty span and no cameras', () => {
		expect(() => buildTimingTable(demoInput({ usableSpan: { startSeconds: 5, endSeconds: 5 } }))).toThrow(/empty/);
		expect(() => buildTimingTable(demoInput({ clips: [] }))).toThrow(/at least one/);
	});
});

describe('helpers', () => {
	it('column keys are unique, lower case and plain', () => {
		expect(columnKeys(['Rig high', 'Rig high', 'Caméra 2 (low)', '***'])).toEqual(['rig_high', 'rig_high_2', 'camera_2_low', 'camera']);
	});

	it('default tolerance is half a frame of the slowest camera', () => {
		// 25 fps → 20 ms; half = 20 ms (computed).
		expect(defaultToleranceMs([{ frameRate: { num: 25, den: 1 } }, { frameRate: { num: 60000, den: 1001 } }])).toBe(20);
	});

	it('rebuilds frame timing from a stored clip the way frameTimingOf reads a probe', () => {
		const stored = { frameRateNum: 60000, frameRateDen: 1001, variableFrameRate: false, videoStartSeconds: 0, durationSeconds: 86.003, probeJson: JSON.stringify({ frameCount: 5155, videoDurationSeconds: 86.002583 }) };
		expect(frameTimingOfStored(stored, null)).toEqual({
			frames: { kind: 'constant', frameRate: { num: 60000, den: 1001 }, firstFrameSeconds: 0, frameCount: 5155 },
			frameRate: { num: 60000, den: 1001 }
		});
		const noCount = { ...stored, probeJson: JSON.stringify({ videoDurationSeconds: 10 }) };
		expect(frameTimingOfStored(noCount, null)!.frames).toMatchObject({ frameCount: 599 });
		const vfr = { ...stored, variableFrameRate: true, frameRateNum: 30, frameRateDen: 1 };
		expect(frameTimingOfStored(vfr, [0, 0.03, 0.07])!.frames).toEqual({ kind: 'variable', frameTimesSeconds: [0, 0.03, 0.07] });
	});
});
