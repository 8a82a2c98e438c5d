import { readFile } from 'node:fs/promises';
import { z } from 'zod';
import { requirePermission } from '$lib/server/guard';
import { FRAME_CONTENT_TYPES, frameGrab } from '$lib/server/media/frame-grab';
import { answer, parseInput } from '$lib/server/refusal';
import type { RequestHandler } from './$types';

const Params = z.object({
	frame: z.coerce.number('The frame must be a number.').int('The frame must be a whole number.').min(0, 'Frames count from 0.'),
	format: z.enum(['jpeg', 'png'], 'format is jpeg or png.').default('jpeg')
});

/** One video frame of a clip, cut at its presentation timestamp, 320 px wide at most. `?format=png` for lossless. */
export const GET: RequestHandler = async (event) => {
	const { scope } = requirePermission(event, 'sessions:read');
	const clip = scope.clip(event.params.id);
	const { frame, format } = await answer(() => parseInput(Params, { frame: event.params.frame, format: event.url.searchParams.get('format') ?? undefined }));
	const path = await answer(() => frameGrab(clip, frame, format));
	return new Response(await readFile(path), {
		headers: { 'content-type': FRAME_CONTENT_TYPES[format], 'cache-control': 'private, max-age=86400, immutable' }
	});
};
