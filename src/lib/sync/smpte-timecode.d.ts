// smpte-timecode 1.3.6 ships no types; this declares the part the timecode spec cross-checks against.
declare module 'smpte-timecode' {
	interface Timecode {
		frameCount: number;
		hours: number;
		minutes: number;
		seconds: number;
		frames: number;
		dropFrame: boolean;
		toString(): string;
	}
	function Timecode(timecode: number | string, frameRate?: number | [number, number], dropFrame?: boolean): Timecode;
	export default Timecode;
}
