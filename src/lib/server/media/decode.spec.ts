import { execFileSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mediaBinaries } from './binaries';
import { decodeAudio, decodeSounds, releaseSound, scratchFolder, sweepAbandonedFolders } from './decode';
import { probeMedia } from './probe';

let dir = '';
const sampleRate = 8000;

/** Index of the loudest sample: where the click is. */
function clickSeconds(samples: ArrayLike<number>): number {
	let best = 0;
	for (let i = 1; i < samples.length; i++) if (Math.abs(samples[i]) > Math.abs(samples[best])) best = i;
	return best / sampleRate;
}

/** The shift (samples) of `b` against `a` that best matches a stretch of `a`: direct correlation over ±maxShift. */
function bestShift(a: ArrayLike<number>, b: ArrayLike<number>, from: number, length: number, maxShift: number): number {
	let best = 0;
	let bestValue = Number.NEGATIVE_INFINITY;
	for (let shift = -maxShift; shift <= maxShift; shift++) {
		let sum = 0;
		for (let i = from; i < from + length; i++) sum += a[i] * b[i + shift];
		if (sum > bestValue) [best, bestValue] = [shift, sum];
	}
	return best;
}

beforeAll(() => {
	dir = mkdtempSync(join(tmpdir(), 'decode-spec-'));
	const { ffmpegPath } = mediaBinaries();
	const ffmpeg = (args: string[]) => execFileSync(ffmpegPath, ['-v', 'error', '-y', ...args]);
	// A 2 ms click at 1.000 s in 3 s of 48 kHz audio, with 25 fps video, AAC in MP4 (priming samples and an edit list).
	ffmpeg([
		'-f', 'lavfi', '-i', "aevalsrc='if(between(t,1.0,1.002),0.9,0)':s=48000:d=3",
		'-f', 'lavfi', '-i', 'testsrc2=s=160x120:r=25:d=3',
		'-map', '1:v', '-map', '0:a', '-c:v', 'libx264', '-preset', 'ultrafast', '-c:a', 'aac', '-b:a', '128k',
		join(dir, 'click.mp4')
	]);
	// The same audio placed 0.5 s later on the container's timeline than the video.
	ffmpeg(['-i', join(dir, 'click.mp4'), '-itsoffset', '0.5', '-i', join(dir, 'click.mp4'), '-map', '0:v', '-map', '1:a', '-c', 'copy', join(dir, 'late-audio.mp4')]);
});

afterAll(() => {
	if (dir) rmSync(dir, { recursive: true, force: true });
});

describe('decodeAudio', () => {
	it('puts sample k at clip time startSeconds + k / rate, the AAC priming removed', async () => {
		const pcm = await decodeAudio(join(dir, 'click.mp4'), { sampleRate });
		expect(pcm.sampleRate).toBe(sampleRate);
		expect(pcm.startSeconds).toBe(0);
		// The click was written at 1.000–1.002 s (aevalsrc above); ISO/IEC 14496-12 edit lists remove the encoder delay.
		expect(Math.abs(clickSeconds(pcm.samples) - 1.001)).toBeLessThan(1.5e-3);
	});

	it('keeps audio that starts after the video where the container places it', async () => {
		const probe = await probeMedia(join(dir, 'late-audio.mp4'));
		expect(probe.audio?.startSeconds).toBeGreaterThan(0.4);
		const pcm = await decodeAudio(join(dir, 'late-audio.mp4'), { sampleRate });
		expect(pcm.startSeconds).toBe(probe.audio!.startSeconds);
		// Shifted by the 0.5 s timestamp offset (STACK.md: the decoded samples' timestamps place them).
		expect(Math.abs(pcm.startSeconds + clickSeconds(pcm.samples) - 1.501)).toBeLessThan(1.5e-3);
	});

	it('decodes several clips in one run exactly as each alone, and blames a bad one by name', async () => {
		const paths = [join(dir, 'click.mp4'), join(dir, 'late-audio.mp4')];
		const together = await decodeSounds(paths, { sampleRate });
		const alone = await Promise.all(paths.map((path) => decodeAudio(path, { sampleRate })));
		for (const [i, result] of together.entries()) {
			expect(result.status).toBe('fulfilled');
			if (result.status !== 'fulfilled') continue;
			const pcm = readFileSync(result.value.scratchPath);
			expect(Buffer.compare(pcm, Buffer.from(alone[i].samples.buffer))).toBe(0);
			releaseSound(result.value);
		}
		const withBad = await decodeSounds([paths[0], join(dir, 'missing.mp4')], { sampleRate });
		expect(withBad[0].status).toBe('fulfilled');
		expect(withBad[1].status).toBe('rejected');
		if (withBad[1].status === 'rejected') expect(String(withBad[1].reason)).toMatch(/missing\.mp4/);
		if (withBad[0].status === 'fulfilled') releaseSound(withBad[0].value);
		expect(readdirSync(scratchFolder())).toEqual([]);
	});

	it('hands over every sample in order while ffmpeg writes, exactly what lands in the scratch file', async () => {
		const paths = ['fixtures/fountain-lap/high.mp4', 'fixtures/fountain-lap/low.mp4'];
		const received: Int16Array[][] = paths.map(() => []);
		const restarts = paths.map(() => 0);
		const [first, second] = await decodeSounds(paths, {
			sampleRate,
			follow: (index, samples) => {
				if (!samples) {
					restarts[index]++;
					received[index] = [];
				} else received[index].push(samples.slice()); // the array handed over is reused
			}
		});
		for (const [i, result] of [first, second].entries()) {
			expect(result.status).toBe('fulfilled');
			if (result.status !== 'fulfilled') continue;
			const written = new Int16Array(new Uint8Array(readFileSync(result.value.scratchPath)).buffer);
			const joined = new Int16Array(received[i].reduce((n, chunk) => n + chunk.length, 0));
			received[i].reduce((at, chunk) => (joined.set(chunk, at), at + chunk.length), 0);
			expect(joined.length).toBe(written.length);
			expect(Buffer.compare(Buffer.from(joined.buffer), Buffer.from(written.buffer))).toBe(0);
			expect(restarts[i]).toBe(1);
			releaseSound(result.value);
		}
	});

	it('fails with the reason when whoever follows the sound fails, and leaves no scratch file', async () => {
		const [result] = await decodeSounds(['fixtures/fountain-lap/mid.mp4'], {
			sampleRate,
			follow: (_, samples) => {
				if (samples) throw new Error('the envelope could not take more');
			}
		});
		expect(result.status).toBe('rejected');
		if (result.status === 'rejected') expect(String(result.reason)).toMatch(/mid\.mp4: the decoded sound could not be read back: the envelope could not take more/);
		expect(readdirSync(scratchFolder())).toEqual([]);
	});

	it('places the sound at the same samples with soxr and with ffmpeg\'s own resampler', async () => {
		const decodeBoth = (path: string) =>
			Promise.all((['soxr', 'swr'] as const).map((resampler) => decodeAudio(path, { sampleRate, resampler })));
		const [soxr, swr] = await decodeBoth(join(dir, 'click.mp4'));
		expect(soxr.samples.length).toBe(swr.samples.length);
		expect(soxr.startSeconds).toBe(swr.startSeconds);
		expect(Math.abs(clickSeconds(soxr.samples) - clickSeconds(swr.samples))).toBeLessThanOrEqual(1 / sampleRate);
		// A phone clip whose audio starts 100 ms late with its AAC priming in view (fixtures/vfr-phone/truth.json):
		// the start must not pick up the resampler's filter delay (it did, by 399 samples, when soxr padded).
		const [soxrPhone, swrPhone] = await decodeBoth('fixtures/vfr-phone/phone.mp4');
		expect(soxrPhone.samples.length).toBe(swrPhone.samples.length);
		expect(soxrPhone.startSeconds).toBeCloseTo(0.079, 9);
		expect(bestShift(swrPhone.samples, soxrPhone.samples, 5 * sampleRate, sampleRate, 800)).toBe(0);
	});

	it('reads the sound back whole and leaves no scratch file behind, after success or failure', async () => {
		const pcm = await decodeAudio(join(dir, 'late-audio.mp4'), { sampleRate });
		// The 3 s written (beforeAll), to within one AAC frame, starting 0.5 s in.
		expect(Math.abs(pcm.samples.length / sampleRate - 3)).toBeLessThan(0.03);
		expect(Math.abs(pcm.startSeconds + pcm.samples.length / sampleRate - 3.5)).toBeLessThan(0.03);
		await expect(decodeAudio(join(dir, 'missing.mp4'), { sampleRate })).rejects.toThrow();
		// This process's own folder: other test files' align runs have folders of their own.
		expect(scratchFolder()).toMatch(/lockstep-decode-/);
		expect(readdirSync(scratchFolder())).toEqual([]);
	});

	it('sweeps away the scratch folders of processes that have ended, and only those', () => {
		const parent = join(dir, 'shm');
		// 999999999 is above Linux's largest process id (4194304, /proc/sys/kernel/pid_max), so no process has it.
		for (const name of [`lockstep-decode-${process.pid}-alive`, 'lockstep-decode-999999999-gone', 'someone-else']) mkdirSync(join(parent, name), { recursive: true });
		sweepAbandonedFolders(parent);
		expect(readdirSync(parent).sort()).toEqual([`lockstep-decode-${process.pid}-alive`, 'someone-else']);
	});

	it('fails with one clear reason for a file that is not media', async () => {
		await expect(decodeAudio(join(dir, 'missing.mp4'), { sampleRate })).rejects.toThrow(/missing\.mp4/);
		await expect(probeMedia(join(dir, 'missing.mp4'))).rejects.toThrow(/No such file/);
	});
});
