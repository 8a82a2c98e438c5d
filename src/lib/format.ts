/** Display helpers shared by pages; numbers in the UI go through these so they read the same everywhere. */

export function frameRateLabel(num: number | null, den: number | null): string {
	if (!num || !den) return '—';
	const fps = num / den;
	// 30000/1001 is "29.97", 25/1 is "25": two decimals only where the rate is not whole.
	return Number.isInteger(fps) ? String(fps) : (Math.round(fps * 100) / 100).toFixed(2);
}

export function durationLabel(seconds: number | null | undefined): string {
	if (seconds === null || seconds === undefined || !Number.isFinite(seconds)) return '—';
	const m = Math.floor(seconds / 60);
	const s = seconds - m * 60;
	return m > 0 ? `${m}:${s.toFixed(2).padStart(5, '0')}` : `${s.toFixed(2)} s`;
}

export function bytesLabel(bytes: number): string {
	const units = ['B', 'KB', 'MB', 'GB', 'TB'];
	let value = bytes;
	let unit = 0;
	while (value >= 1000 && unit < units.length - 1) {
		value /= 1000;
		unit++;
	}
	return `${value.toFixed(unit === 0 ? 0 : 1)} ${units[unit]}`;
}

export type ConfidenceWord = 'high' | 'fair' | 'low' | 'none';

/** Confidence is always shown as a word with its number, never as a colour alone. */
export function confidenceWord(confidence: number | null, matched: boolean | null): ConfidenceWord {
	if (confidence === null || matched === false) return 'none';
	if (confidence >= 0.8) return 'high';
	if (confidence >= 0.5) return 'fair';
	return 'low';
}

export function offsetLabel(seconds: number | null): string {
	if (seconds === null) return '—';
	return `${seconds >= 0 ? '+' : '−'}${Math.abs(seconds).toFixed(4)} s`;
}

export function driftLabel(ppm: number | null): string {
	if (ppm === null) return '—';
	return `${ppm >= 0 ? '+' : '−'}${Math.abs(ppm).toFixed(1)} ppm`;
}

export const POSITION_LABELS = { high: 'High', mid: 'Mid', low: 'Low', other: 'Other' } as const;
