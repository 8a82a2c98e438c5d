import { error, json } from '@sveltejs/kit';
import { z } from 'zod';
import { requirePermission } from '$lib/server/guard';
import { readPeaksWindow } from '$lib/server/media/peaks';
import type { RequestHandler } from './$types';

const Window = z
	.object({
		start: z.coerce.number().min(0, 'start must be 0 or more seconds.').default(0),
		end: z.coerce.number().positive('end must be after 0 s.'),
		pixels: z.coerce.number().int().min(1).max(20000, 'Ask for at most 20000 pixels.').default(1000)
	})
	.refine((w) => w.end > w.start, 'end must be after start.');

/** Min/max peaks of a clip's sound for one window of clip time, about one pair per pixel. */
export const GET: RequestHandler = async (event) => {
	const { scope } = requirePermission(event, 'sessions:read');
	const clip = scope.clip(event.params.id);
	const parsed = Window.safeParse(Object.fromEntries(event.url.searchParams));
	if (!parsed.success) error(400, { code: 'invalid_input', message: parsed.error.issues[0].message });
	if (!clip.peaksPath) error(409, { code: 'not_ready', message: 'The waveform of this clip is still being drawn; try again shortly.' });
	const { start, end, pixels } = parsed.data;
	return json(await readPeaksWindow(clip.peaksPath, start, end, pixels), { headers: { 'cache-control': 'private, max-age=300' } });
};
