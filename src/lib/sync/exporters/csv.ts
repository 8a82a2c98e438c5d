import { stringify } from 'csv-stringify/sync';
import type { TimingTable } from '../timing-table';
import { approvalWord, decimal } from './common';

/*
 * RFC 4180 CSV (CRLF line ends, quotes only where a field needs them, a header row). Two
 * tables: one record per instant, or one per camera. Every record starts with the approval
 * and the session revision, so a file never loses them, even cut into pieces.
 */

export type CsvTable = 'instants' | 'clips';

export function instantsHeader(table: TimingTable): string[] {
	const perCamera = table.clips.flatMap((c) => [`${c.key}_frame`, `${c.key}_time_s`, `${c.key}_timecode`, `${c.key}_residual_ms`]);
	return ['approval', 'session_revision', 'instant', 'session_time_s', ...perCamera, 'worst_residual_ms', 'flagged'];
}

export function instantsCsv(table: TimingTable): string {
	const approval = approvalWord(table);
	const revision = String(table.session.revision);
	const records = table.rows.map((row) => [
		approval,
		revision,
		String(row.index),
		decimal(row.sessionSeconds, 6),
		...row.cells.flatMap((cell) =>
			cell ? [String(cell.index), decimal(cell.timeSeconds, 6), cell.timecode, decimal(cell.residualMs, 3)] : ['', '', '', '']
		),
		row.worstResidualMs === null ? '' : decimal(row.worstResidualMs, 3),
		row.flagged ? 'yes' : 'no'
	]);
	return stringify([instantsHeader(table), ...records], { record_delimiter: 'windows' });
}

export const CLIPS_HEADER = [
	'approval',
	'session_revision',
	'camera',
	'key',
	'position',
	'file',
	'reference',
	'offset_s',
	'drift_ppm',
	'frame_rate',
	'frame_rate_fps',
	'variable_frame_rate',
	'frame_count',
	'drop_frame',
	'start_timecode',
	'usable_start_clip_s',
	'usable_end_clip_s',
	'first_frame',
	'first_frame_time_s',
	'first_frame_timecode',
	'last_frame',
	'last_frame_time_s',
	'last_frame_timecode'
];

export function clipsCsv(table: TimingTable): string {
	const approval = approvalWord(table);
	const records = table.clips.map((c) => [
		approval,
		String(table.session.revision),
		c.label,
		c.key,
		c.position,
		c.fileName,
		c.isReference ? 'yes' : 'no',
		decimal(c.offsetSeconds, 9),
		decimal(c.driftPpm, 6),
		`${c.frameRate.num}/${c.frameRate.den}`,
		decimal(c.frameRate.fps, 9),
		c.variableFrameRate ? 'yes' : 'no',
		String(c.frameCount),
		c.dropFrame ? 'yes' : 'no',
		c.startTimecode,
		decimal(c.usableSpan.startSeconds, 6),
		decimal(c.usableSpan.endSeconds, 6),
		c.firstFrame ? String(c.firstFrame.index) : '',
		c.firstFrame ? decimal(c.firstFrame.timeSeconds, 6) : '',
		c.firstFrame?.timecode ?? '',
		c.lastFrame ? String(c.lastFrame.index) : '',
		c.lastFrame ? decimal(c.lastFrame.timeSeconds, 6) : '',
		c.lastFrame?.timecode ?? ''
	]);
	return stringify([CLIPS_HEADER, ...records], { record_delimiter: 'windows' });
}

export function timingCsv(table: TimingTable, which: CsvTable = 'instants'): string {
	return which === 'clips' ? clipsCsv(table) : instantsCsv(table);
}
