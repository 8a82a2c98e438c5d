import type { TimingTable } from '../timing-table';

/** Session time → clip time formula, written into the files that carry offsets. */
export const TIME_FORMULA = 'sessionTime = offsetSeconds + clipTime × (1 + driftPpm × 1e-6)';

/** A fixed-point decimal without trailing zeros or exponent: 2.5, 0.000001, -44.999 (deterministic text). */
export function decimal(value: number, digits: number): string {
	const text = value.toFixed(digits);
	const trimmed = text.includes('.') ? text.replace(/0+$/, '').replace(/\.$/, '') : text;
	return trimmed === '-0' ? '0' : trimmed;
}

export function approvalWord(table: TimingTable): 'approved' | 'UNAPPROVED' {
	return table.approved ? 'approved' : 'UNAPPROVED';
}

/** The sentence an unapproved export carries at its top, or null for an approved session. */
export function unapprovedNotice(table: TimingTable): string | null {
	if (table.approved) return null;
	const state = { draft: 'a draft', aligned: 'aligned but not reviewed', in_review: 'in review', approved: 'approved' }[table.session.status];
	return `UNAPPROVED: revision ${table.session.revision} of this capture session is ${state}; a reviewer has not approved these offsets and they may still change.`;
}

export function instantsDescription(table: TimingTable): string {
	const choice = table.instants;
	if (choice.kind === 'every') return `every ${decimal(choice.everySeconds, 6)} s of the usable span`;
	if (choice.kind === 'count') return `${choice.count} instants spread evenly across the usable span`;
	const clip = table.clips.find((c) => c.id === choice.clipId);
	return `every frame of ${clip?.label ?? 'one camera'} in the usable span`;
}

export function slug(text: string): string {
	return (
		text
			.normalize('NFKD')
			.replace(/[\u0300-\u036f]/g, '')
			.toLowerCase()
			.replace(/[^a-z0-9]+/g, '-')
			.replace(/^-+|-+$/g, '')
			.slice(0, 60) || 'session'
	);
}

/** "market-square-fountain-lap-2-r7" (+ "-UNAPPROVED"): the stem of every file of one export. */
export function fileStem(table: TimingTable): string {
	return `${slug(table.session.name)}-r${table.session.revision}${table.approved ? '' : '-UNAPPROVED'}`;
}
