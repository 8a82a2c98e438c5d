export const SESSION_STATUS_LABELS = {
	draft: 'Draft',
	aligned: 'Aligned',
	in_review: 'In review',
	approved: 'Approved'
} as const;
export type SessionStatusName = keyof typeof SESSION_STATUS_LABELS;
