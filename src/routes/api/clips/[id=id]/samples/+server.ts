import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { requirePermission } from '$lib/server/guard';
import { readSampleWindow } from '$lib/server/media/samples';
import { answer, parseInput, Refusal } from '$lib/server/refusal';
import type { RequestHandler } from './$types';

const Window = z.object({
	start: z.coerce.number('Give start as seconds of clip time.').min(0, 'start must be 0 or more seconds.'),
	end: z.coerce.number('Give end as seconds of clip time.').positive('end must be after 0 s.')
});

/** The clip's own mono samples for a short window of clip time: what the deepest zoom draws. */
export const GET: RequestHandler = async (event) => {
	const { scope } = requirePermission(event, 'sessions:read');
	const clip = scope.clip(event.params.id);
	return answer(async () => {
		const { start, end } = parseInput(Window, Object.fromEntries(event.url.searchParams));
		if (clip.durationSeconds === null) throw new Refusal('not_ready', 'This clip has not been probed yet; try again shortly.', 409);
		if (!clip.sampleRate) throw new Refusal('no_audio', 'This clip has no sound, so it has no samples to show.', 409);
		// A caller that has gone (the workbench scrolled on) stops the decode.
		const window = await readSampleWindow(clip.storagePath, clip.sampleRate, clip.durationSeconds, start, end, event.request.signal);
		return json(window, { headers: { 'cache-control': 'private, max-age=300' } });
	});
};
