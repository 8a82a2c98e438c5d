import { describe, expect, it } from 'vitest';
import { decodeGroups } from './align-runner';

describe('decodeGroups', () => {
	it('puts a lap of three cameras into one ffmpeg run', () => {
		expect(decodeGroups([86, 82, 74])).toEqual([[0, 1, 2]]);
	});

	it('gives each long clip a run of its own, longest first', () => {
		expect(decodeGroups([1800, 3600, 2400])).toEqual([[1], [2], [0]]);
	});

	it('packs short clips into runs of at most five minutes of sound', () => {
		const groups = decodeGroups([80, 80, 80, 80, 80, 80]);
		expect(groups).toEqual([
			[0, 1, 2],
			[3, 4, 5]
		]);
	});

	it('decodes a clip of unknown length alone, and keeps a long clip apart from short ones', () => {
		expect(decodeGroups([null, 60, 200, 70])).toEqual([[0], [2], [1, 3]]);
	});
});
