import type { Handle, HandleServerError, ServerInit } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { identifyToken } from '$lib/server/api-tokens';
import { lucia } from '$lib/server/auth';
import { applyMigrations, databasePath, db } from '$lib/server/db';
import { registerAnalysisHandlers } from '$lib/server/jobs/handlers';
import { startJobRunner } from '$lib/server/jobs/runner';
import { startMail, stopMail } from '$lib/server/mail';
import { describeMediaBinaries } from '$lib/server/media/binaries';
import { WORKSPACE_COOKIE, membershipsOf } from '$lib/server/workspaces';

export const init: ServerInit = async () => {
	applyMigrations(db);
	console.log(`Database: ${databasePath()}`);
	console.log(describeMediaBinaries());
	await startMail();
	registerAnalysisHandlers();
	startJobRunner();
	// adapter-node closes the HTTP server on SIGTERM/SIGINT, then emits this: close the local
	// SMTP server too, or its open socket keeps the process alive.
	process.once('sveltekit:shutdown', () => void stopMail());
};

/** Resolves who is asking, once per request: a bearer token, or the session cookie. */
const resolveIdentity: Handle = async ({ event, resolve }) => {
	event.locals.user = null;
	event.locals.session = null;
	event.locals.apiToken = null;
	event.locals.workspace = null;
	event.locals.role = null;
	event.locals.memberships = [];

	const authorization = event.request.headers.get('authorization');
	if (authorization) {
		const secret = authorization.match(/^Bearer\s+(\S+)$/i)?.[1];
		const identity = secret ? identifyToken(secret) : null;
		if (identity) {
			event.locals.apiToken = { id: identity.tokenId, name: identity.tokenName };
			event.locals.workspace = identity.workspace;
			event.locals.role = identity.role;
		}
		// An Authorization header that does not resolve never falls back to the cookie.
		return resolve(event);
	}

	const sessionId = event.cookies.get(lucia.sessionCookieName);
	if (!sessionId) return resolve(event);

	const { session, user } = await lucia.validateSession(sessionId);
	if (session?.fresh) {
		const cookie = lucia.createSessionCookie(session.id);
		event.cookies.set(cookie.name, cookie.value, { path: '.', ...cookie.attributes });
	}
	if (!session || !user || !user.active) {
		if (session) await lucia.invalidateSession(session.id);
		const blank = lucia.createBlankSessionCookie();
		event.cookies.set(blank.name, blank.value, { path: '.', ...blank.attributes });
		return resolve(event);
	}

	event.locals.user = { id: user.id, email: user.email, displayName: user.displayName };
	event.locals.session = session;
	const all = membershipsOf(user.id);
	event.locals.memberships = all.map((m) => ({ workspaceId: m.workspaceId, workspaceName: m.workspaceName, role: m.role }));
	const chosen = all.find((m) => m.workspaceId === event.cookies.get(WORKSPACE_COOKIE)) ?? all[0];
	if (chosen) {
		event.locals.workspace = { id: chosen.workspaceId, name: chosen.workspaceName, slug: chosen.workspaceSlug };
		event.locals.role = chosen.role;
	}
	return resolve(event);
};

/** The JSON API answers every error as { error: { code, message } }. */
const shapeApiErrors: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	if (!event.url.pathname.startsWith('/api/') || response.status < 400) return response;
	if (!response.headers.get('content-type')?.includes('application/json')) {
		const text = await response.text();
		return Response.json(
			{ error: { code: codeForStatus(response.status), message: text.trim() || statusMessage(response.status) } },
			{ status: response.status, headers: retainedHeaders(response) }
		);
	}
	const body: unknown = await response.clone().json().catch(() => null);
	if (body && typeof body === 'object' && 'error' in body) return response;
	const message =
		body && typeof body === 'object' && 'message' in body && typeof body.message === 'string'
			? body.message
			: statusMessage(response.status);
	const code =
		body && typeof body === 'object' && 'code' in body && typeof body.code === 'string'
			? body.code
			: codeForStatus(response.status);
	return Response.json({ error: { code, message } }, { status: response.status, headers: retainedHeaders(response) });
};

function retainedHeaders(response: Response): Headers {
	const headers = new Headers();
	for (const name of ['retry-after', 'www-authenticate', 'allow']) {
		const value = response.headers.get(name);
		if (value) headers.set(name, value);
	}
	return headers;
}

function codeForStatus(status: number): string {
	const codes: Record<number, string> = {
		400: 'bad_request',
		401: 'unauthenticated',
		403: 'forbidden',
		404: 'not_found',
		405: 'method_not_allowed',
		409: 'conflict',
		413: 'too_large',
		415: 'unsupported_media',
		422: 'invalid_input',
		429: 'too_many_requests'
	};
	return codes[status] ?? (status >= 500 ? 'server_error' : 'error');
}

function statusMessage(status: number): string {
	if (status === 404) return 'Nothing here: check the address.';
	if (status >= 500) return 'Something went wrong on the server; the error has been logged.';
	return `Request failed with status ${status}.`;
}

export const handle = sequence(resolveIdentity, shapeApiErrors);

export const handleError: HandleServerError = ({ error, status, message }) => {
	if (status === 404) return { message: 'Nothing here: check the address.', code: 'not_found' };
	console.error(error);
	return { message: status >= 500 ? 'Something went wrong on the server; the error has been logged.' : message, code: 'server_error' };
};
