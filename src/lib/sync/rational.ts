/** An exact rate such as 30000/1001 frames per second; never stored as a rounded float. */
export interface Rational {
	num: number;
	den: number;
}

function gcd(a: number, b: number): number {
	let x = Math.abs(a);
	let y = Math.abs(b);
	while (y) [x, y] = [y, x % y];
	return x;
}

export function rational(num: number, den: number): Rational {
	if (!Number.isInteger(num) || !Number.isInteger(den) || den === 0) {
		throw new RangeError(`not a rational: ${num}/${den}`);
	}
	const g = gcd(num, den) || 1;
	const sign = den < 0 ? -1 : 1;
	return { num: (sign * num) / g, den: (sign * den) / g };
}

/** Parses ffprobe's "30000/1001" (or a bare integer); "0/0" and malformed text give null. */
export function parseRational(text: string | undefined | null): Rational | null {
	if (!text) return null;
	const match = /^\s*(-?\d+)\s*(?:[/:]\s*(\d+))?\s*$/.exec(text);
	if (!match) return null;
	const num = Number(match[1]);
	const den = match[2] === undefined ? 1 : Number(match[2]);
	if (den === 0 || num === 0) return null;
	return rational(num, den);
}

export function formatRational(r: Rational): string {
	return `${r.num}/${r.den}`;
}

export function rationalToNumber(r: Rational): number {
	return r.num / r.den;
}

export function rationalEquals(a: Rational, b: Rational): boolean {
	return a.num * b.den === b.num * a.den;
}

/** Duration of one frame in seconds, den/num. */
export function frameDurationSeconds(rate: Rational): number {
	return rate.den / rate.num;
}
