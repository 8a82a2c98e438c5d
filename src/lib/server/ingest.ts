import { copyFile, rename, rm } from 'node:fs/promises';
import { join } from 'node:path';
import { eq } from 'drizzle-orm';
import { rationalToNumber } from '../sync/rational';
import { recordActivity } from './activity';
import { db } from './db';
import { captureSessions, clips, type CameraPosition, type Clip } from './db/schema';
import { newId } from './ids';
import { enqueueJob } from './jobs/queue';
import { IngestError, validateMediaFile } from './media/validate';
import type { WorkspaceScope } from './scope';
import { originalsDir, safeFileName, sha256OfFile } from './storage';

export { IngestError };

export interface IngestSource {
	/** The file as it is now: a finished upload, or a file inside an import root. */
	path: string;
	originalName: string;
	/** move: a finished upload becomes the stored original; copy or reference: an import. */
	placement: 'move' | 'copy' | 'reference';
	cameraLabel?: string;
	cameraPosition?: CameraPosition;
}

export type IngestOutcome = { kind: 'added'; clip: Clip; warning: string | null } | { kind: 'duplicate'; clip: Clip };

/**
 * Makes a clip of a file, or says precisely why not. Everything is checked before any
 * record is written, so a refused file leaves nothing behind; the original is never changed.
 */
export async function ingestFile(scope: WorkspaceScope, sessionId: string, userId: string | null, source: IngestSource): Promise<IngestOutcome> {
	const session = scope.session(sessionId);
	const originalName = safeFileName(source.originalName);
	const sha256 = await sha256OfFile(source.path);

	const duplicate = db
		.select()
		.from(clips)
		.where(scope.where(clips, eq(clips.sessionId, session.id), eq(clips.sha256, sha256)))
		.get();
	if (duplicate) {
		if (source.placement === 'move') await rm(source.path, { force: true });
		return { kind: 'duplicate', clip: duplicate };
	}

	let validated;
	try {
		validated = await validateMediaFile(source.path, originalName);
	} catch (error) {
		if (source.placement === 'move') await rm(source.path, { force: true });
		throw error;
	}

	let storagePath = source.path;
	if (source.placement !== 'reference') {
		storagePath = join(await originalsDir(scope.workspaceId, sha256), originalName);
		if (source.placement === 'move') await rename(source.path, storagePath);
		else await copyFile(source.path, storagePath);
	}

	const { probe } = validated;
	const video = probe.video!;
	const existing = db.select({ id: clips.id }).from(clips).where(scope.where(clips, eq(clips.sessionId, session.id))).all();
	const clipId = newId();
	try {
		db.transaction((tx) => {
			tx.insert(clips)
				.values({
					id: clipId,
					workspaceId: scope.workspaceId,
					sessionId: session.id,
					cameraLabel: source.cameraLabel?.trim() || `Camera ${existing.length + 1}`,
					cameraPosition: source.cameraPosition ?? 'other',
					originalName,
					storagePath,
					storageKind: source.placement === 'reference' ? 'referenced' : 'stored',
					sizeBytes: validated.sizeBytes,
					sha256,
					state: 'probing',
					problem: validated.warning,
					container: probe.formatName,
					durationSeconds: probe.durationSeconds,
					videoCodec: video.codec,
					width: video.width,
					height: video.height,
					rotationDegrees: video.rotationDegrees,
					frameRateNum: video.frameRate?.num ?? null,
					frameRateDen: video.frameRate?.den ?? null,
					videoStartSeconds: video.startSeconds,
					audioCodec: probe.audio?.codec ?? null,
					sampleRate: probe.audio?.sampleRate ?? null,
					channels: probe.audio?.channels ?? null,
					audioStartSeconds: probe.audio?.startSeconds ?? null,
					creationTime: probe.creationTime,
					embeddedTimecode: probe.timecode
				})
				.run();
			tx.update(captureSessions).set({ updatedAt: new Date() }).where(eq(captureSessions.id, session.id)).run();
		});
	} catch (error) {
		if (source.placement === 'move') await rename(storagePath, source.path).catch(() => undefined);
		else if (source.placement === 'copy') await rm(storagePath, { force: true });
		throw error;
	}
	const rate = video.frameRate ? `${rationalToNumber(video.frameRate).toFixed(2)} fps` : 'unknown rate';
	recordActivity(scope, { sessionId: session.id, userId, kind: 'clip_added', message: `added ${originalName} (${rate})` });
	enqueueJob({ workspaceId: scope.workspaceId, sessionId: session.id, clipId, kind: 'probe', requestedBy: userId });
	return { kind: 'added', clip: scope.clip(clipId), warning: validated.warning };
}

/** Clips of a session that are ready to align by sound. */
export function alignableClips(scope: WorkspaceScope, sessionId: string): Clip[] {
	return db
		.select()
		.from(clips)
		.where(scope.where(clips, eq(clips.sessionId, sessionId), eq(clips.state, 'ready'), eq(clips.included, true)))
		.all()
		.filter((c) => c.audioCodec);
}

