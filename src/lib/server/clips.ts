import { eq } from 'drizzle-orm';
import { z } from 'zod';
import { recordActivity } from './activity';
import { db } from './db';
import { CAMERA_POSITIONS, clips, type Clip } from './db/schema';
import { parseInput } from './refusal';
import type { WorkspaceScope } from './scope';

export const ClipEditFields = z.object({
	cameraLabel: z.string().trim().min(1, 'Give the camera a label, e.g. "High".').max(60, 'Keep the camera label under 60 characters.').optional(),
	cameraPosition: z.enum(CAMERA_POSITIONS, 'Choose high, mid, low or other.').optional(),
	included: z.boolean().optional()
});

/** Renames a clip's camera or moves it to another position; the original file is never touched. */
export function editClip(scope: WorkspaceScope, clipId: string, userId: string | null, input: unknown): Clip {
	const clip = scope.clip(clipId);
	const edit = parseInput(ClipEditFields, input);
	db.update(clips).set(edit).where(scope.where(clips, eq(clips.id, clip.id))).run();
	const changed = Object.entries(edit)
		.filter(([key, value]) => clip[key as keyof typeof edit] !== value)
		.map(([key, value]) => `${key} → ${String(value)}`);
	if (changed.length) {
		recordActivity(scope, { sessionId: clip.sessionId, userId, kind: 'clip_edited', message: `changed ${clip.cameraLabel}: ${changed.join(', ')}` });
	}
	return scope.clip(clipId);
}

/** What the browser may know of a clip: no server paths. */
export function publicClip(clip: Clip) {
	const { storagePath, audioProxyPath, peaksPath, frameTimesPath, probeJson, syncDetailJson, ...rest } = clip;
	return {
		...rest,
		storedAs: clip.storageKind,
		hasPeaks: !!peaksPath,
		hasAudioProxy: !!audioProxyPath,
		hasFrameTimes: !!frameTimesPath,
		probe: probeJson ? (JSON.parse(probeJson) as Record<string, unknown>) : null,
		syncDetail: syncDetailJson ? (JSON.parse(syncDetailJson) as Record<string, unknown>) : null,
		fileName: storagePath.split('/').pop() ?? clip.originalName
	};
}
export type PublicClip = ReturnType<typeof publicClip>;
