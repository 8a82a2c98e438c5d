import { sql } from 'drizzle-orm';
import { index, integer, primaryKey, real, sqliteTable, text } from 'drizzle-orm/sqlite-core';

/*
 * One schema for the whole product. Every table of domain data carries
 * `workspace_id`: the scoped accessors in `../scope.ts` filter on it, so nothing of
 * one workspace is reachable from another whatever id a request guesses.
 */

const createdAt = () =>
	integer('created_at', { mode: 'timestamp_ms' })
		.notNull()
		.default(sql`(unixepoch() * 1000)`);

export const ROLES = ['admin', 'editor', 'reviewer', 'processor'] as const;
export type Role = (typeof ROLES)[number];

export const CAMERA_POSITIONS = ['high', 'mid', 'low', 'other'] as const;
export type CameraPosition = (typeof CAMERA_POSITIONS)[number];

export const SESSION_STATUSES = ['draft', 'aligned', 'in_review', 'approved'] as const;
export type SessionStatus = (typeof SESSION_STATUSES)[number];

export const JOB_STATES = ['queued', 'running', 'done', 'failed', 'cancelled'] as const;
export type JobState = (typeof JOB_STATES)[number];

// ─── People and access ──────────────────────────────────────────────────────

export const users = sqliteTable('users', {
	id: text('id').primaryKey(),
	email: text('email').notNull().unique(),
	displayName: text('display_name').notNull(),
	passwordHash: text('password_hash'),
	active: integer('active', { mode: 'boolean' }).notNull().default(true),
	createdAt: createdAt()
});
export type User = typeof users.$inferSelect;

export const workspaces = sqliteTable('workspaces', {
	id: text('id').primaryKey(),
	name: text('name').notNull(),
	slug: text('slug').notNull().unique(),
	createdAt: createdAt()
});
export type Workspace = typeof workspaces.$inferSelect;

export const memberships = sqliteTable(
	'memberships',
	{
		userId: text('user_id')
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		workspaceId: text('workspace_id')
			.notNull()
			.references(() => workspaces.id, { onDelete: 'cascade' }),
		role: text('role', { enum: ROLES }).notNull(),
		createdAt: createdAt()
	},
	(t) => [primaryKey({ columns: [t.userId, t.workspaceId] })]
);
export type Membership = typeof memberships.$inferSelect;

/** Sign-in sessions, in the shape lucia's Drizzle adapter expects. */
export const authSessions = sqliteTable('auth_sessions', {
	id: text('id').primaryKey(),
	userId: text('user_id')
		.notNull()
		.references(() => users.id, { onDelete: 'cascade' }),
	expiresAt: integer('expires_at').notNull()
});

export const invitations = sqliteTable('invitations', {
	id: text('id').primaryKey(),
	workspaceId: text('workspace_id')
		.notNull()
		.references(() => workspaces.id, { onDelete: 'cascade' }),
	email: text('email').notNull(),
	role: text('role', { enum: ROLES }).notNull(),
	tokenHash: text('token_hash').notNull().unique(),
	invitedBy: text('invited_by').references(() => users.id),
	expiresAt: integer('expires_at', { mode: 'timestamp_ms' }).notNull(),
	acceptedAt: integer('accepted_at', { mode: 'timestamp_ms' }),
	createdAt: createdAt()
});
export type Invitation = typeof invitations.$inferSelect;

export const passwordResets = sqliteTable('password_resets', {
	id: text('id').primaryKey(),
	userId: text('user_id')
		.notNull()
		.references(() => users.id, { onDelete: 'cascade' }),
	tokenHash: text('token_hash').notNull().unique(),
	expiresAt: integer('expires_at', { mode: 'timestamp_ms' }).notNull(),
	usedAt: integer('used_at', { mode: 'timestamp_ms' }),
	createdAt: createdAt()
});
export type PasswordReset = typeof passwordResets.$inferSelect;

export const apiTokens = sqliteTable('api_tokens', {
	id: text('id').primaryKey(),
	workspaceId: text('workspace_id')
		.notNull()
		.references(() => workspaces.id, { onDelete: 'cascade' }),
	name: text('name').notNull(),
	role: text('role', { enum: ROLES }).notNull(),
	/** First characters of the token, shown in lists so people can tell tokens apart. */
	prefix: text('prefix').notNull(),
	tokenHash: text('token_hash').notNull().unique(),
	createdBy: text('created_by').references(() => users.id),
	lastUsedAt: integer('last_used_at', { mode: 'timestamp_ms' }),
	revokedAt: integer('revoked_at', { mode: 'timestamp_ms' }),
	createdAt: createdAt()
});
export type ApiToken = typeof apiTokens.$inferSelect;

/** Failed sign-ins per key ("account:<email>" or "address:<ip>"), kept across restarts. */
export const signInFailures = sqliteTable('sign_in_failures', {
	key: text('key').primaryKey(),
	failures: integer('failures').notNull().default(0),
	windowStartedAt: integer('window_started_at', { mode: 'timestamp_ms' }).notNull(),
	lockedUntil: integer('locked_until', { mode: 'timestamp_ms' })
});

export const outgoingMail = sqliteTable('outgoing_mail', {
	id: text('id').primaryKey(),
	workspaceId: text('workspace_id').references(() => workspaces.id, { onDelete: 'set null' }),
	fromAddress: text('from_address').notNull(),
	toAddress: text('to_address').notNull(),
	subject: text('subject').notNull(),
	textBody: text('text_body').notNull(),
	htmlBody: text('html_body'),
	messageId: text('message_id'),
	/** 'local' when caught by the built-in SMTP server, 'relay' when sent through SMTP_URL. */
	transport: text('transport', { enum: ['local', 'relay'] }).notNull(),
	createdAt: createdAt()
});
export type OutgoingMail = typeof outgoingMail.$inferSelect;

// ─── Capture sessions and media ─────────────────────────────────────────────

export const importRoots = sqliteTable('import_roots', {
	id: text('id').primaryKey(),
	workspaceId: text('workspace_id')
		.notNull()
		.references(() => workspaces.id, { onDelete: 'cascade' }),
	name: text('name').notNull(),
	path: text('path').notNull(),
	mode: text('mode', { enum: ['reference', 'copy'] }).notNull(),
	createdAt: createdAt()
});
export type ImportRoot = typeof importRoots.$inferSelect;

export const captureSessions = sqliteTable(
	'capture_sessions',
	{
		id: text('id').primaryKey(),
		workspaceId: text('workspace_id')
			.notNull()
			.references(() => workspaces.id, { onDelete: 'cascade' }),
		name: text('name').notNull(),
		site: text('site').notNull().default(''),
		captureDate: text('capture_date'),
		rigNotes: text('rig_notes').notNull().default(''),
		status: text('status', { enum: SESSION_STATUSES }).notNull().default('draft'),
		referenceClipId: text('reference_clip_id'),
		usableStartSeconds: real('usable_start_seconds'),
		usableEndSeconds: real('usable_end_seconds'),
		/** Optimistic concurrency: every change must name the version it was based on. */
		version: integer('version').notNull().default(1),
		createdBy: text('created_by').references(() => users.id),
		archivedAt: integer('archived_at', { mode: 'timestamp_ms' }),
		createdAt: createdAt(),
		updatedAt: integer('updated_at', { mode: 'timestamp_ms' })
			.notNull()
			.default(sql`(unixepoch() * 1000)`)
	},
	(t) => [index('capture_sessions_workspace').on(t.workspaceId)]
);
export type CaptureSession = typeof captureSessions.$inferSelect;

export const clips = sqliteTable(
	'clips',
	{
		id: text('id').primaryKey(),
		workspaceId: text('workspace_id')
			.notNull()
			.references(() => workspaces.id, { onDelete: 'cascade' }),
		sessionId: text('session_id')
			.notNull()
			.references(() => captureSessions.id, { onDelete: 'cascade' }),
		cameraLabel: text('camera_label').notNull(),
		cameraPosition: text('camera_position', { enum: CAMERA_POSITIONS }).notNull().default('other'),
		originalName: text('original_name').notNull(),
		/** Where the untouched original lives: under MEDIA_ROOT, or inside an import root. */
		storagePath: text('storage_path').notNull(),
		storageKind: text('storage_kind', { enum: ['stored', 'referenced'] }).notNull(),
		sizeBytes: integer('size_bytes').notNull(),
		sha256: text('sha256').notNull(),
		state: text('state', { enum: ['probing', 'ready', 'failed'] })
			.notNull()
			.default('probing'),
		problem: text('problem'),
		// Probed metadata
		container: text('container'),
		durationSeconds: real('duration_seconds'),
		videoCodec: text('video_codec'),
		width: integer('width'),
		height: integer('height'),
		rotationDegrees: integer('rotation_degrees'),
		frameRateNum: integer('frame_rate_num'),
		frameRateDen: integer('frame_rate_den'),
		variableFrameRate: integer('variable_frame_rate', { mode: 'boolean' }).notNull().default(false),
		videoStartSeconds: real('video_start_seconds'),
		audioCodec: text('audio_codec'),
		sampleRate: integer('sample_rate'),
		channels: integer('channels'),
		audioStartSeconds: real('audio_start_seconds'),
		creationTime: text('creation_time'),
		embeddedTimecode: text('embedded_timecode'),
		/** JSON probe details kept for the engine (frame timestamps of variable-rate clips live in a file). */
		probeJson: text('probe_json'),
		frameTimesPath: text('frame_times_path'),
		// Derived media
		audioProxyPath: text('audio_proxy_path'),
		peaksPath: text('peaks_path'),
		// Sync result
		included: integer('included', { mode: 'boolean' }).notNull().default(true),
		locked: integer('locked', { mode: 'boolean' }).notNull().default(false),
		offsetSeconds: real('offset_seconds'),
		driftPpm: real('drift_ppm'),
		confidence: real('confidence'),
		matched: integer('matched', { mode: 'boolean' }),
		syncMethod: text('sync_method', { enum: ['audio', 'marker', 'manual'] }),
		syncDetailJson: text('sync_detail_json'),
		trimStartSeconds: real('trim_start_seconds'),
		trimEndSeconds: real('trim_end_seconds'),
		createdAt: createdAt()
	},
	(t) => [index('clips_session').on(t.sessionId), index('clips_workspace_sha').on(t.workspaceId, t.sha256)]
);
export type Clip = typeof clips.$inferSelect;

export const analysisJobs = sqliteTable(
	'analysis_jobs',
	{
		id: text('id').primaryKey(),
		workspaceId: text('workspace_id')
			.notNull()
			.references(() => workspaces.id, { onDelete: 'cascade' }),
		sessionId: text('session_id').references(() => captureSessions.id, { onDelete: 'cascade' }),
		clipId: text('clip_id').references(() => clips.id, { onDelete: 'cascade' }),
		kind: text('kind', { enum: ['probe', 'proxy', 'peaks', 'align'] }).notNull(),
		state: text('state', { enum: JOB_STATES }).notNull().default('queued'),
		progress: real('progress').notNull().default(0),
		message: text('message').notNull().default(''),
		attempts: integer('attempts').notNull().default(0),
		paramsJson: text('params_json'),
		resultJson: text('result_json'),
		cancelRequested: integer('cancel_requested', { mode: 'boolean' }).notNull().default(false),
		requestedBy: text('requested_by').references(() => users.id),
		createdAt: createdAt(),
		startedAt: integer('started_at', { mode: 'timestamp_ms' }),
		finishedAt: integer('finished_at', { mode: 'timestamp_ms' })
	},
	(t) => [index('analysis_jobs_state').on(t.state), index('analysis_jobs_session').on(t.sessionId)]
);
export type AnalysisJob = typeof analysisJobs.$inferSelect;

/** Who changed which offset, span or reference, from what to what, when and why. */
export const revisions = sqliteTable(
	'revisions',
	{
		id: text('id').primaryKey(),
		workspaceId: text('workspace_id')
			.notNull()
			.references(() => workspaces.id, { onDelete: 'cascade' }),
		sessionId: text('session_id')
			.notNull()
			.references(() => captureSessions.id, { onDelete: 'cascade' }),
		/** The session version this revision produced. */
		sessionVersion: integer('session_version').notNull(),
		userId: text('user_id').references(() => users.id),
		kind: text('kind', {
			enum: ['alignment', 'offset', 'drift', 'reference', 'usable_span', 'trim', 'clip', 'revert', 'status']
		}).notNull(),
		clipId: text('clip_id').references(() => clips.id, { onDelete: 'set null' }),
		fromJson: text('from_json'),
		toJson: text('to_json'),
		reason: text('reason').notNull().default(''),
		createdAt: createdAt()
	},
	(t) => [index('revisions_session').on(t.sessionId)]
);
export type Revision = typeof revisions.$inferSelect;

export const spotChecks = sqliteTable('spot_checks', {
	id: text('id').primaryKey(),
	workspaceId: text('workspace_id')
		.notNull()
		.references(() => workspaces.id, { onDelete: 'cascade' }),
	sessionId: text('session_id')
		.notNull()
		.references(() => captureSessions.id, { onDelete: 'cascade' }),
	sessionVersion: integer('session_version').notNull(),
	instantSeconds: real('instant_seconds').notNull(),
	reviewerId: text('reviewer_id').references(() => users.id),
	verdict: text('verdict', { enum: ['in_sync', 'off', 'cannot_tell'] }).notNull(),
	offByFrames: real('off_by_frames'),
	note: text('note').notNull().default(''),
	/** The marked-event check made with this spot check (MarkedEventResult in review.ts), or null. */
	markedEventJson: text('marked_event_json'),
	createdAt: createdAt()
});
export type SpotCheck = typeof spotChecks.$inferSelect;

export const reviewDecisions = sqliteTable('review_decisions', {
	id: text('id').primaryKey(),
	workspaceId: text('workspace_id')
		.notNull()
		.references(() => workspaces.id, { onDelete: 'cascade' }),
	sessionId: text('session_id')
		.notNull()
		.references(() => captureSessions.id, { onDelete: 'cascade' }),
	sessionVersion: integer('session_version').notNull(),
	reviewerId: text('reviewer_id').references(() => users.id),
	decision: text('decision', { enum: ['approve', 'send_back'] }).notNull(),
	note: text('note').notNull().default(''),
	createdAt: createdAt()
});
export type ReviewDecision = typeof reviewDecisions.$inferSelect;

export const exportRecords = sqliteTable('exports', {
	id: text('id').primaryKey(),
	workspaceId: text('workspace_id')
		.notNull()
		.references(() => workspaces.id, { onDelete: 'cascade' }),
	sessionId: text('session_id')
		.notNull()
		.references(() => captureSessions.id, { onDelete: 'cascade' }),
	sessionVersion: integer('session_version').notNull(),
	format: text('format', { enum: ['csv', 'json', 'otio', 'script', 'summary'] }).notNull(),
	paramsJson: text('params_json').notNull(),
	userId: text('user_id').references(() => users.id),
	apiTokenId: text('api_token_id').references(() => apiTokens.id, { onDelete: 'set null' }),
	sha256: text('sha256').notNull(),
	byteSize: integer('byte_size').notNull(),
	createdAt: createdAt()
});
export type ExportRecord = typeof exportRecords.$inferSelect;

/** What happened to a session, in words, for its activity feed. */
export const activity = sqliteTable(
	'activity',
	{
		id: text('id').primaryKey(),
		workspaceId: text('workspace_id')
			.notNull()
			.references(() => workspaces.id, { onDelete: 'cascade' }),
		sessionId: text('session_id').references(() => captureSessions.id, { onDelete: 'cascade' }),
		userId: text('user_id').references(() => users.id),
		kind: text('kind').notNull(),
		message: text('message').notNull(),
		createdAt: createdAt()
	},
	(t) => [index('activity_session').on(t.sessionId)]
);
export type Activity = typeof activity.$inferSelect;

