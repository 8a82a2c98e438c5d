import { z } from 'zod';
import { ROLE_NAMES, PERMISSIONS, type Permission } from '$lib/permissions';
import { AlignmentEditRequest, RevertRequest } from './alignment-edits';
import { ClipEditFields } from './clips';
import { MarkedEventResult, ReviewDecisionInput, SendForReview, SpotCheckInput, SpotCheckRecord } from './review';
import { ImportRequest } from './import-browse';
import { ImportRootFields } from './import-roots';
import { InvitationFields } from './invitations';
import { TokenFields } from './token-admin';
import { SessionEditFields, SessionFields } from '$lib/validation/session';

/*
 * The OpenAPI 3.1 description of /api. Request bodies are generated from the same zod
 * schemas the routes validate with, so the document cannot drift from what they accept;
 * tests/openapi.spec.ts checks that every API route on disk is described and no more.
 */

type Method = 'get' | 'post' | 'patch' | 'delete' | 'head';

interface Operation {
	summary: string;
	permission: Permission | 'signed-in';
	body?: z.ZodType;
	/** The successful JSON answer, where the document describes it. */
	answer?: z.ZodType;
	query?: Record<string, { description: string; type: 'string' | 'number' | 'integer'; required?: boolean }>;
	/** Content type of a successful answer, when not JSON. */
	produces?: string;
	status?: number;
}

const MemberChange = z.object({ role: z.enum(ROLE_NAMES).optional(), active: z.boolean().optional() });

/** Every answer that carries the review names its spot checks (each with its marked event, if any). */
const ReviewAnswer = z.looseObject({ spotChecks: z.array(SpotCheckRecord) });

const id = { in: 'path', required: true, schema: { type: 'string' } } as const;

const OPERATIONS: Record<string, Partial<Record<Method, Operation>>> = {
	'/api/me': { get: { summary: 'Who is asking: person or token, workspace and role', permission: 'signed-in' } },
	'/api/sessions': {
		get: {
			summary: 'Capture sessions of the workspace',
			permission: 'sessions:read',
			query: { q: { description: 'search in name and site', type: 'string' }, status: { description: 'draft, aligned, in_review or approved', type: 'string' } }
		},
		post: { summary: 'Create a capture session', permission: 'sessions:write', body: SessionFields, status: 201 }
	},
	'/api/sessions/{id}': {
		get: { summary: 'A capture session with its clips', permission: 'sessions:read' },
		patch: { summary: "Edit a session's details (send the version you saw)", permission: 'sessions:write', body: SessionEditFields }
	},
	'/api/sessions/{id}/jobs': { get: { summary: "The session's analysis jobs", permission: 'sessions:read' } },
	'/api/sessions/{id}/events': {
		get: {
			summary: 'Server-sent events: a "jobs" snapshot, then each job change',
			permission: 'sessions:read',
			produces: 'text/event-stream',
			query: { once: { description: 'answer the snapshot and close', type: 'string' } }
		}
	},
	'/api/sessions/{id}/align': { post: { summary: 'Align the clips by sound (joins a pending run)', permission: 'alignment:run', status: 202 } },
	'/api/sessions/{id}/alignment': {
		get: { summary: 'The alignment: reference, offsets, drifts, spans, trims, locks', permission: 'sessions:read' },
		post: { summary: 'Change the alignment (offset, drift, reference, lock, span, trim)', permission: 'alignment:edit', body: AlignmentEditRequest }
	},
	'/api/sessions/{id}/revisions': {
		get: {
			summary: 'Revisions, newest first',
			permission: 'sessions:read',
			query: { since: { description: 'only revisions after this session version', type: 'integer' } }
		}
	},
	'/api/sessions/{id}/revisions/{revision}/revert': {
		post: { summary: 'Return the alignment to how it was after a revision', permission: 'alignment:edit', body: RevertRequest }
	},
	'/api/sessions/{id}/imports': { post: { summary: 'Import files from an import folder', permission: 'clips:write', body: ImportRequest } },
	'/api/sessions/{id}/timing-table': {
		get: {
			summary: 'The timing table as CSV, JSON, OpenTimelineIO, an extraction script or a summary',
			permission: 'exports:create',
			produces: 'text/csv, application/json, text/x-shellscript, text/html',
			query: {
				format: { description: 'csv (default), json, otio, script or summary', type: 'string' },
				every: { description: 'an instant every this many seconds', type: 'number' },
				count: { description: 'this many instants spread over the usable span', type: 'integer' },
				frameOf: { description: 'every frame of this clip (id)', type: 'string' },
				cameras: { description: 'comma-separated clip ids to include', type: 'string' },
				tolerance: { description: 'flag rows whose worst residual exceeds this many ms', type: 'number' },
				table: { description: 'instants (default) or clips (CSV only)', type: 'string' },
				unapproved: { description: '"ok" to export a session that is not approved', type: 'string' }
			}
		}
	},
	'/api/clips/{id}': {
		get: { summary: 'A clip with its probed metadata and sync result', permission: 'sessions:read' },
		patch: { summary: 'Rename the camera, move it, leave it out', permission: 'clips:write', body: ClipEditFields }
	},
	'/api/clips/{id}/peaks': {
		get: {
			summary: 'Waveform min/max pairs for a window of clip time',
			permission: 'sessions:read',
			query: {
				start: { description: 'window start, seconds of clip time', type: 'number' },
				end: { description: 'window end, seconds of clip time', type: 'number', required: true },
				pixels: { description: 'about one min/max pair per pixel (1–20000)', type: 'integer' }
			}
		}
	},
	'/api/clips/{id}/samples': {
		get: {
			summary: 'The clip\'s own mono samples for a short window of clip time (at most 32768 samples)',
			permission: 'sessions:read',
			query: {
				start: { description: 'window start, seconds of clip time', type: 'number', required: true },
				end: { description: 'window end, seconds of clip time', type: 'number', required: true }
			}
		}
	},
	'/api/clips/{id}/proxy': { get: { summary: 'Listening copy (mono AAC) with HTTP Range', permission: 'sessions:read', produces: 'audio/mp4' } },
	'/api/clips/{id}/frames/{frame}': {
		get: {
			summary: 'One video frame, cut at its presentation timestamp, at most 320 px wide',
			permission: 'sessions:read',
			produces: 'image/jpeg',
			query: { format: { description: 'jpeg (default) or png', type: 'string' } }
		}
	},
	'/api/sessions/{id}/review': {
		get: {
			summary: 'Status, approval, spot checks and decisions; with count or at, each camera\'s nearest frame at those instants',
			permission: 'sessions:read',
			query: {
				count: { description: 'instants spread across the usable span (1–24)', type: 'integer' },
				at: { description: 'an instant picked one by one, session seconds; repeat for more (at most 24), beside or instead of count', type: 'number' }
			},
			answer: ReviewAnswer
		}
	},
	'/api/sessions/{id}/review/send': { post: { summary: 'Send an aligned session for review', permission: 'review:send', body: SendForReview, answer: ReviewAnswer } },
	'/api/sessions/{id}/review/checks': {
		post: {
			summary: 'Record a spot check while the session is in review; with marks, the marked event\'s result is kept with it',
			permission: 'review:check',
			body: SpotCheckInput,
			answer: z.object({ spotCheck: SpotCheckRecord }),
			status: 201
		}
	},
	'/api/sessions/{id}/review/decision': { post: { summary: 'Approve, or send back to aligned with notes', permission: 'review:decide', body: ReviewDecisionInput, answer: ReviewAnswer } },
	'/api/sessions/{id}/review/marked-event': {
		get: {
			summary: 'The offsets one visible event implies against the sound',
			permission: 'sessions:read',
			query: { mark: { description: 'clipId:frame, once per camera (two or more)', type: 'string', required: true } },
			answer: z.object({ estimate: MarkedEventResult })
		}
	},
	'/api/jobs/{id}/cancel': { post: { summary: 'Cancel a queued or running job', permission: 'alignment:run' } },
	'/api/jobs/{id}/retry': { post: { summary: 'Queue a failed or cancelled job again', permission: 'alignment:run' } },
	'/api/import-roots': { get: { summary: 'Import folders editors may browse', permission: 'imports:browse' } },
	'/api/import-roots/{id}/browse': {
		get: { summary: 'List a folder inside an import folder', permission: 'imports:browse', query: { path: { description: 'folder relative to the root', type: 'string' } } }
	},
	'/api/uploads/{path}': {
		get: { summary: 'Upload settings: largest file and chunk size (path empty)', permission: 'clips:write' },
		post: { summary: 'tus 1.0: create an upload (metadata: sessionId, filename, cameraLabel, cameraPosition)', permission: 'clips:write', status: 201 },
		head: { summary: 'tus 1.0: how much of an upload has arrived', permission: 'clips:write' },
		patch: { summary: 'tus 1.0: send the next bytes (application/offset+octet-stream)', permission: 'clips:write', status: 204 },
		delete: { summary: 'tus 1.0: abandon an upload', permission: 'clips:write', status: 204 }
	},
	'/api/admin/people': { get: { summary: 'Members of the workspace', permission: 'people:manage' } },
	'/api/admin/people/{id}': {
		patch: { summary: "Change a member's role or activate / deactivate them", permission: 'people:manage', body: MemberChange },
		delete: { summary: 'Remove a member from the workspace', permission: 'people:manage' }
	},
	'/api/admin/invitations': {
		get: { summary: 'Open invitations', permission: 'people:manage' },
		post: { summary: 'Invite someone by e-mail with a role', permission: 'people:manage', body: InvitationFields, status: 201 }
	},
	'/api/admin/invitations/{id}': { delete: { summary: 'Withdraw an invitation', permission: 'people:manage' } },
	'/api/admin/tokens': {
		get: { summary: 'API tokens of the workspace', permission: 'tokens:manage' },
		post: { summary: 'Create an API token (its secret is answered once)', permission: 'tokens:manage', body: TokenFields, status: 201 }
	},
	'/api/admin/tokens/{id}': { delete: { summary: 'Revoke an API token', permission: 'tokens:manage' } },
	'/api/admin/imports': {
		get: { summary: 'Import folders', permission: 'imports:manage' },
		post: { summary: 'Name a server folder as an import folder', permission: 'imports:manage', body: ImportRootFields, status: 201 }
	},
	'/api/admin/imports/{id}': { delete: { summary: 'Remove an import folder', permission: 'imports:manage' } },
	'/api/admin/outbox': { get: { summary: 'Mail sent by Lockstep (the local mail fake)', permission: 'outbox:read' } },
	'/api/admin/outbox/{id}': { get: { summary: 'One message', permission: 'outbox:read' } }
};

const ERROR_SCHEMA = {
	type: 'object',
	required: ['error'],
	properties: { error: { type: 'object', required: ['code', 'message'], properties: { code: { type: 'string' }, message: { type: 'string' } } } }
};

function rolesFor(permission: Operation['permission']): string {
	return permission === 'signed-in' ? 'any member' : (PERMISSIONS[permission] as readonly string[]).join(', ');
}

export function openApiDocument(origin: string) {
	const paths: Record<string, Record<string, unknown>> = {};
	for (const [path, methods] of Object.entries(OPERATIONS)) {
		const pathParams = [...path.matchAll(/\{(\w+)\}/g)].map((m) => ({ ...id, name: m[1] }));
		paths[path] = {};
		for (const [method, op] of Object.entries(methods) as [Method, Operation][]) {
			const status = String(op.status ?? 200);
			paths[path][method] = {
				summary: op.summary,
				description: `Allowed to: ${rolesFor(op.permission)}.`,
				parameters: [
					...pathParams,
					...Object.entries(op.query ?? {}).map(([name, q]) => ({ name, in: 'query', required: !!q.required, description: q.description, schema: { type: q.type } }))
				],
				...(op.body ? { requestBody: { required: true, content: { 'application/json': { schema: z.toJSONSchema(op.body, { io: 'input', unrepresentable: 'any' }) } } } } : {}),
				responses: {
					[status]: { description: 'Done', content: { [op.produces ?? 'application/json']: op.answer ? { schema: z.toJSONSchema(op.answer, { io: 'output', unrepresentable: 'any' }) } : {} } },
					default: { description: 'Refused: what was wrong and what to do', content: { 'application/json': { schema: ERROR_SCHEMA } } }
				}
			};
		}
	}
	return {
		openapi: '3.1.0',
		info: {
			title: 'Lockstep API',
			version: '1',
			description: 'Capture sessions, clips, alignment and timing tables. Send the session cookie or "Authorization: Bearer <token>".'
		},
		servers: [{ url: origin }],
		components: { securitySchemes: { token: { type: 'http', scheme: 'bearer' }, cookie: { type: 'apiKey', in: 'cookie', name: 'lockstep_session' } } },
		security: [{ token: [] }, { cookie: [] }],
		paths
	};
}
