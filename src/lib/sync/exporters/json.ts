import type { TimingTable } from '../timing-table';
import { TIME_FORMULA, unapprovedNotice } from './common';

/** The JSON schema's name and version (docs/timing-table.md). Bump the number on any breaking change. */
export const TIMING_TABLE_SCHEMA = 'lockstep-timing-table/1';

/**
 * The timing table as JSON: keys in a fixed order, the header pretty-printed, one row per line
 * (a long table stays readable and diffs line by line). Same table, same bytes.
 */
export function timingJson(table: TimingTable): string {
	const head = {
		schema: TIMING_TABLE_SCHEMA,
		approval: table.approved ? 'approved' : 'unapproved',
		notice: unapprovedNotice(table),
		session: {
			id: table.session.id,
			name: table.session.name,
			site: table.session.site,
			captureDate: table.session.captureDate,
			status: table.session.status,
			revision: table.session.revision
		},
		formula: TIME_FORMULA,
		usableSpan: { startSeconds: table.usableSpan.startSeconds, endSeconds: table.usableSpan.endSeconds },
		instants: instantsJson(table),
		toleranceMs: table.toleranceMs,
		toleranceRule: table.toleranceRule,
		summary: {
			rowCount: table.summary.rowCount,
			flaggedCount: table.summary.flaggedCount,
			worstResidualMs: table.summary.worstResidualMs,
			meanAbsResidualMs: table.summary.meanAbsResidualMs
		},
		cameras: table.clips.map((c) => ({
			key: c.key,
			id: c.id,
			label: c.label,
			position: c.position,
			file: c.fileName,
			reference: c.isReference,
			offsetSeconds: c.offsetSeconds,
			driftPpm: c.driftPpm,
			frameRate: { num: c.frameRate.num, den: c.frameRate.den, fps: c.frameRate.fps },
			variableFrameRate: c.variableFrameRate,
			frameCount: c.frameCount,
			dropFrame: c.dropFrame,
			startTimecode: c.startTimecode,
			embeddedTimecode: c.embeddedTimecode,
			usableSpan: { startSeconds: c.usableSpan.startSeconds, endSeconds: c.usableSpan.endSeconds },
			firstFrame: c.firstFrame ? { index: c.firstFrame.index, timeSeconds: c.firstFrame.timeSeconds, timecode: c.firstFrame.timecode } : null,
			lastFrame: c.lastFrame ? { index: c.lastFrame.index, timeSeconds: c.lastFrame.timeSeconds, timecode: c.lastFrame.timecode } : null
		})),
		rows: ROWS
	};
	const rows = table.rows.map((row) =>
		JSON.stringify({
			instant: row.index,
			sessionSeconds: row.sessionSeconds,
			frames: Object.fromEntries(
				row.cells.map((cell, c) => [
					table.clips[c].key,
					cell ? { frame: cell.index, timeSeconds: cell.timeSeconds, timecode: cell.timecode, residualMs: cell.residualMs } : null
				])
			),
			worstResidualMs: row.worstResidualMs,
			flagged: row.flagged
		})
	);
	const body = rows.length ? `[\n    ${rows.join(',\n    ')}\n  ]` : '[]';
	const text = JSON.stringify(head, null, 2);
	// "rows" is the last key, so its placeholder is the last occurrence whatever a name contains.
	const at = text.lastIndexOf(`"${ROWS}"`);
	return text.slice(0, at) + body + text.slice(at + ROWS.length + 2) + '\n';
}

const ROWS = '@rows@';

function instantsJson(table: TimingTable) {
	const choice = table.instants;
	if (choice.kind === 'every') return { kind: 'every', everySeconds: choice.everySeconds };
	if (choice.kind === 'count') return { kind: 'count', count: choice.count };
	return { kind: 'frames', camera: table.clips.find((c) => c.id === choice.clipId)?.key ?? null };
}
