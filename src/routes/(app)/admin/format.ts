const dateTime = new Intl.DateTimeFormat('en-GB', { dateStyle: 'medium', timeStyle: 'short' });
const dateOnly = new Intl.DateTimeFormat('en-GB', { dateStyle: 'medium' });

export function formatDateTime(value: Date | string | null | undefined): string {
	return value ? dateTime.format(new Date(value)) : '—';
}

export function formatDate(value: Date | string | null | undefined): string {
	return value ? dateOnly.format(new Date(value)) : '—';
}
