import { describe, expect, it } from 'vitest';
import { confidenceWord, frameRateLabel } from './format';

describe('display of rates and confidence', () => {
	it('shows NTSC-family rationals the way the trade writes them', () => {
		// 60000/1001 = 59.9400599… fps, written 59.94; 30000/1001 written 29.97 (SMPTE/ATSC practice).
		expect(frameRateLabel(60000, 1001)).toBe('59.94');
		expect(frameRateLabel(30000, 1001)).toBe('29.97');
		expect(frameRateLabel(24000, 1001)).toBe('23.98');
		expect(frameRateLabel(25, 1)).toBe('25');
		expect(frameRateLabel(null, null)).toBe('—');
	});

	it('names confidence in words', () => {
		expect(confidenceWord(0.95, true)).toBe('high');
		expect(confidenceWord(0.6, true)).toBe('fair');
		expect(confidenceWord(0.3, true)).toBe('low');
		expect(confidenceWord(0.9, false)).toBe('none');
	});
});
