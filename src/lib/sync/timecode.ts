import type { Rational } from './rational';

/*
 * SMPTE ST 12-1 time code from whole frame counts. Everything here is integer arithmetic on
 * frame numbers: a label never comes from seconds, so nothing creeps over a long take.
 * Drop-frame applies to the 30000/1001 and 60000/1001 families only (2 and 4 labels skipped at
 * the start of every minute not divisible by ten); every other rate counts its nominal whole
 * frames per second without skipping.
 */

export interface TimecodeFormat {
	/** Frames counted per labelled second: 30 for 30000/1001, 25 for 25/1, 24 for 24000/1001. */
	framesPerSecond: number;
	dropFrame: boolean;
	/** Labels skipped at each dropping minute: 2 at 30, 4 at 60, 0 without drop-frame. */
	droppedPerMinute: number;
}

const SECONDS_PER_DAY = 86_400;

/** Drop-frame only where the standard defines it (30000/1001, 60000/1001); non-drop everywhere else. */
export function isDropFrameRate(rate: Rational): boolean {
	return rate.den === 1001 && (rate.num === 30000 || rate.num === 60000);
}

export function timecodeFormat(rate: Rational, dropFrame = isDropFrameRate(rate)): TimecodeFormat {
	if (!(rate.num > 0) || !(rate.den > 0)) throw new RangeError(`no time code at ${rate.num}/${rate.den} fps`);
	const framesPerSecond = Math.max(1, Math.round(rate.num / rate.den));
	if (dropFrame && !isDropFrameRate(rate)) throw new RangeError(`drop-frame is defined only at 30000/1001 and 60000/1001, not ${rate.num}/${rate.den}`);
	return { framesPerSecond, dropFrame, droppedPerMinute: dropFrame ? framesPerSecond / 15 : 0 };
}

/** Frames in a day of labels, the point where time code wraps to 00:00:00:00. */
function framesPerDay(format: TimecodeFormat): number {
	const perDay = format.framesPerSecond * SECONDS_PER_DAY;
	// 24 h hold 144 ten-minute blocks, each dropping nine minutes' worth of labels.
	return format.dropFrame ? perDay - 144 * 9 * format.droppedPerMinute : perDay;
}

const two = (n: number) => String(n).padStart(2, '0');

/**
 * The label of frame `frameCount` counted from 00:00:00:00 (plus `startFrames` when the clip
 * carries a start time code). Drop-frame labels use ';' before the frames, others ':'.
 * Labels wrap after 24 hours, as SMPTE time code does.
 */
export function timecodeOfFrame(frameCount: number, rate: Rational, options: { dropFrame?: boolean; startFrames?: number } = {}): string {
	if (!Number.isSafeInteger(frameCount)) throw new RangeError(`a frame count must be a whole number, not ${frameCount}`);
	const format = timecodeFormat(rate, options.dropFrame);
	const day = framesPerDay(format);
	let frames = (((frameCount + (options.startFrames ?? 0)) % day) + day) % day;
	const fps = format.framesPerSecond;
	if (format.dropFrame) {
		const drop = format.droppedPerMinute;
		const perTenMinutes = 600 * fps - 9 * drop;
		const perDroppingMinute = 60 * fps - drop;
		const blocks = Math.floor(frames / perTenMinutes);
		const within = frames % perTenMinutes;
		// The first minute of each block keeps all its labels; later ones skip `drop` at their start.
		const skipped = 9 * drop * blocks + (within < drop ? 0 : drop * Math.floor((within - drop) / perDroppingMinute));
		frames += skipped;
	}
	const hours = Math.floor(frames / (fps * 3600));
	const minutes = Math.floor(frames / (fps * 60)) % 60;
	const seconds = Math.floor(frames / fps) % 60;
	const ff = frames % fps;
	return `${two(hours)}:${two(minutes)}:${two(seconds)}${format.dropFrame ? ';' : ':'}${two(ff)}`;
}

/**
 * The frame count a label stands for (the inverse of `timecodeOfFrame`). Accepts "HH:MM:SS:FF",
 * "HH:MM:SS;FF" and the "." / "," separators some cameras write; a ';' or ',' means drop-frame.
 * Returns null for text that is not a time code at this rate (including skipped labels).
 */
export function framesOfTimecode(text: string, rate: Rational, dropFrame?: boolean): number | null {
	const match = /^\s*(\d{1,2}):(\d{2}):(\d{2})([:;.,])(\d{2,3})\s*$/.exec(text);
	if (!match) return null;
	const [hours, minutes, seconds, frames] = [match[1], match[2], match[3], match[5]].map(Number);
	const markedDrop = match[4] === ';' || match[4] === ',';
	const drop = dropFrame ?? (markedDrop && isDropFrameRate(rate));
	let format: TimecodeFormat;
	try {
		format = timecodeFormat(rate, drop);
	} catch {
		return null;
	}
	const fps = format.framesPerSecond;
	if (hours > 23 || minutes > 59 || seconds > 59 || frames >= fps) return null;
	const totalMinutes = hours * 60 + minutes;
	if (format.dropFrame && seconds === 0 && minutes % 10 !== 0 && frames < format.droppedPerMinute) return null;
	const nominal = ((hours * 60 + minutes) * 60 + seconds) * fps + frames;
	return format.dropFrame ? nominal - format.droppedPerMinute * (totalMinutes - Math.floor(totalMinutes / 10)) : nominal;
}

/** Frame `index` counted at `rate`, in exact seconds: index × den / num, one rounding only. */
export function secondsOfFrameCount(index: number, rate: Rational): number {
	return (index * rate.den) / rate.num;
}

/** The whole frame count at or before `seconds` at `rate` (integer arithmetic on the rational). */
export function frameCountAtSeconds(seconds: number, rate: Rational): number {
	const exact = (seconds * rate.num) / rate.den;
	const rounded = Math.round(exact);
	// Seconds that came from a frame count land within rounding of a whole number: keep it.
	return Math.abs(exact - rounded) < 1e-6 ? rounded : Math.floor(exact);
}
