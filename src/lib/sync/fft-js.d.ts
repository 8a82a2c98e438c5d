// fft.js 4.0.4 ships no types; this declares the part of its API we use.
declare module 'fft.js' {
	type NumberArray = number[] | Float64Array;
	export default class FFT {
		constructor(size: number);
		readonly size: number;
		createComplexArray(): number[];
		realTransform(out: NumberArray, data: ArrayLike<number>): void;
		completeSpectrum(spectrum: NumberArray): void;
		transform(out: NumberArray, data: ArrayLike<number>): void;
		inverseTransform(out: NumberArray, data: ArrayLike<number>): void;
	}
}
