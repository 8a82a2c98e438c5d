import { readdirSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { alignFiles, decodeGroups } from './align-runner';
import { scratchFolder } from './decode';

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

describe('alignFiles', () => {
	const lap = ['high', 'mid', 'low'].map((name) => `fixtures/fountain-lap/${name}.mp4`);

	it('gives the same answer with the transforms in worker threads as on the main thread, and leaves no scratch sound', async () => {
		const [inline, pool] = [await alignFiles(lap, { workers: 'inline' }), await alignFiles(lap, { workers: 'pool', concurrency: 2 })];
		expect(pool.referenceIndex).toBe(inline.referenceIndex);
		for (const [i, clip] of inline.clips.entries()) {
			expect(clip.matched).toBe(true);
			expect(pool.clips[i].offsetSeconds).toBe(clip.offsetSeconds);
			expect(pool.clips[i].driftPpm).toBe(clip.driftPpm);
		}
		// fixtures/fountain-lap/truth.json: mid starts 2.499505 s and low 8.798942 s after high.
		expect(inline.clips[1].offsetSeconds).toBeCloseTo(2.499505, 4);
		expect(inline.clips[2].offsetSeconds).toBeCloseTo(8.798942, 4);
		expect(readdirSync(scratchFolder())).toEqual([]);
	}, 60_000);

	it('names every unreadable file, and cleans up the sound of the readable ones', async () => {
		await expect(alignFiles([lap[0], 'fixtures/bad/empty.mp4', 'fixtures/bad/notes.mp4'])).rejects.toThrow(/empty\.mp4[\s\S]*notes\.mp4/);
		expect(readdirSync(scratchFolder())).toEqual([]);
	}, 60_000);
});
