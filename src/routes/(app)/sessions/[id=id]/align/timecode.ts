import type { Rational } from '$lib/sync/rational';

/*
 * Ruler labels. Timecode at the reference clip's rate; 29.97 and 59.94 fps count in
 * drop-frame (SMPTE ST 12-1: frame numbers 0–1 (0–3 at 59.94) skipped each minute except
 * every tenth), written with ';' before the frames as is common practice.
 */
export function timecodeLabel(seconds: number, rate: Rational | null): string {
	if (!rate) return '';
	const sign = seconds < 0 ? '−' : '';
	const fps = rate.num / rate.den;
	const nominal = Math.round(fps);
	let frame = Math.floor(Math.abs(seconds) * fps + 1e-9);
	const dropFrame = rate.den === 1001 && (nominal === 30 || nominal === 60);
	if (dropFrame) {
		const drop = nominal === 30 ? 2 : 4;
		const perTenMinutes = nominal * 600 - drop * 9;
		const perMinute = nominal * 60 - drop;
		const tens = Math.floor(frame / perTenMinutes);
		const rest = frame % perTenMinutes;
		frame += drop * 9 * tens + (rest > drop ? drop * Math.floor((rest - drop) / perMinute) : 0);
	}
	const ff = frame % nominal;
	const totalSeconds = Math.floor(frame / nominal);
	const pad = (n: number) => String(n).padStart(2, '0');
	return `${sign}${pad(Math.floor(totalSeconds / 3600))}:${pad(Math.floor(totalSeconds / 60) % 60)}:${pad(totalSeconds % 60)}${dropFrame ? ';' : ':'}${pad(ff)}`;
}

/** Seconds with as many decimals as the tick spacing needs. */
export function secondsLabel(seconds: number, stepSeconds: number): string {
	const decimals = Math.min(6, Math.max(0, Math.ceil(-Math.log10(stepSeconds) + 1e-9)));
	const sign = seconds < 0 ? '−' : '';
	const abs = Math.abs(seconds);
	if (abs >= 60 && stepSeconds >= 1) return `${sign}${Math.floor(abs / 60)}:${String(Math.round(abs % 60)).padStart(2, '0')}`;
	return `${sign}${abs.toFixed(decimals)} s`;
}

const NICE_STEPS = [1, 2, 5];

/** The tick spacing (seconds) that keeps ticks at least `minPixels` apart. */
export function tickStep(pxPerSecond: number, minPixels = 90): number {
	const wanted = minPixels / pxPerSecond;
	let power = Math.pow(10, Math.floor(Math.log10(wanted)));
	for (;;) {
		for (const n of NICE_STEPS) if (n * power >= wanted) return n * power;
		power *= 10;
	}
}
