/*
 * Who may reach what: one row per route of src/routes and method (or form action).
 * tests/permissions.spec.ts discovers every route on disk and fails when one has no row
 * here, so a new page or endpoint cannot ship without a decision about who may use it.
 *
 * Outcomes:  allow  — reaches the route (2xx/3xx, or 400/409/422 for an empty or bad body)
 *            deny   — 403
 *            login  — signed out: pages redirect to /login, the API answers 401
 *            hidden — 404 (a row of another workspace looks like no row at all)
 *            public — reachable by anyone, signed in or not
 */

export type Persona = 'anon' | 'admin' | 'editor' | 'reviewer' | 'processor' | 'outsider';
export type Outcome = 'allow' | 'deny' | 'login' | 'hidden' | 'public';

export interface RouteRule {
	/** Route id as SvelteKit names it, without groups, e.g. /sessions/[id=id]. */
	route: string;
	/** GET, POST, PATCH, DELETE, or POST ?/name for a form action. */
	method: string;
	/** Sample path; `{session}` is a capture session of the demo studio. */
	path: string;
	body?: 'json' | 'form';
	/** Signs the caller out: checked with a throwaway sign-in so the other rows keep theirs. */
	endsSession?: boolean;
	expect: Record<Persona, Outcome>;
}

const everyone: Record<Persona, Outcome> = {
	anon: 'public',
	admin: 'public',
	editor: 'public',
	reviewer: 'public',
	processor: 'public',
	outsider: 'public'
};
const signedIn: Record<Persona, Outcome> = {
	anon: 'login',
	admin: 'allow',
	editor: 'allow',
	reviewer: 'allow',
	processor: 'allow',
	outsider: 'allow'
};
const readSession: Record<Persona, Outcome> = { ...signedIn, outsider: 'hidden' };
const editorOnly: Record<Persona, Outcome> = {
	anon: 'login',
	admin: 'deny',
	editor: 'allow',
	reviewer: 'deny',
	processor: 'deny',
	outsider: 'allow'
};
const editorOfSession: Record<Persona, Outcome> = { ...editorOnly, outsider: 'hidden' };
const adminOnly: Record<Persona, Outcome> = {
	anon: 'login',
	admin: 'allow',
	editor: 'deny',
	reviewer: 'deny',
	processor: 'deny',
	outsider: 'deny'
};

/** Routes about a job or clip id that does not exist: the guard answers first, then the scope finds nothing. */
const editorProbe: Record<Persona, Outcome> = { ...editorOnly, editor: 'hidden', outsider: 'hidden' };
const readProbe: Record<Persona, Outcome> = { ...signedIn, admin: 'hidden', editor: 'hidden', reviewer: 'hidden', processor: 'hidden', outsider: 'hidden' };

/** A reviewer of the session's workspace; the outsider (an editor elsewhere) is refused by role before any lookup. */
const reviewerOfSession: Record<Persona, Outcome> = { anon: 'login', admin: 'deny', editor: 'deny', reviewer: 'allow', processor: 'deny', outsider: 'deny' };

const hiddenForAll: Record<Persona, Outcome> = {
	anon: 'hidden',
	admin: 'hidden',
	editor: 'hidden',
	reviewer: 'hidden',
	processor: 'hidden',
	outsider: 'hidden'
};

export const ROUTE_RULES: RouteRule[] = [
	{ route: '/api/openapi.json', method: 'GET', path: '/api/openapi.json', expect: everyone },
	// Administration (admin only)
	{ route: '/admin/people', method: 'GET', path: '/admin/people', expect: adminOnly },
	...['invite', 'role', 'deactivate', 'reactivate', 'remove', 'withdraw'].map((a) => ({ route: '/admin/people', method: `POST ?/${a}`, path: `/admin/people?/${a}`, body: 'form' as const, expect: adminOnly })),
	{ route: '/admin/tokens', method: 'GET', path: '/admin/tokens', expect: adminOnly },
	...['create', 'revoke'].map((a) => ({ route: '/admin/tokens', method: `POST ?/${a}`, path: `/admin/tokens?/${a}`, body: 'form' as const, expect: adminOnly })),
	{ route: '/admin/imports', method: 'GET', path: '/admin/imports', expect: adminOnly },
	...['add', 'remove'].map((a) => ({ route: '/admin/imports', method: `POST ?/${a}`, path: `/admin/imports?/${a}`, body: 'form' as const, expect: adminOnly })),
	{ route: '/admin/outbox', method: 'GET', path: '/admin/outbox', expect: adminOnly },
	{ route: '/admin/outbox/[id=id]', method: 'GET', path: '/admin/outbox/no-such-mail', expect: { ...adminOnly, admin: 'hidden' } },
	{ route: '/forgot', method: 'GET', path: '/forgot', expect: everyone },
	{ route: '/forgot', method: 'POST', path: '/forgot', body: 'form', expect: everyone },
	{ route: '/invite/[token]', method: 'GET', path: '/invite/no-such-token', expect: hiddenForAll },
	{ route: '/invite/[token]', method: 'POST', path: '/invite/no-such-token', body: 'form', expect: hiddenForAll },
	{ route: '/reset/[token]', method: 'GET', path: '/reset/no-such-token', expect: hiddenForAll },
	{ route: '/reset/[token]', method: 'POST', path: '/reset/no-such-token', body: 'form', expect: hiddenForAll },
	{ route: '/api/admin/people', method: 'GET', path: '/api/admin/people', expect: adminOnly },
	{ route: '/api/admin/people/[id=id]', method: 'PATCH', path: '/api/admin/people/no-such-person', body: 'json', expect: adminOnly },
	{ route: '/api/admin/people/[id=id]', method: 'DELETE', path: '/api/admin/people/no-such-person', expect: { ...adminOnly, admin: 'hidden' } },
	{ route: '/api/admin/invitations', method: 'GET', path: '/api/admin/invitations', expect: adminOnly },
	{ route: '/api/admin/invitations', method: 'POST', path: '/api/admin/invitations', body: 'json', expect: adminOnly },
	{ route: '/api/admin/invitations/[id=id]', method: 'DELETE', path: '/api/admin/invitations/no-such-invite', expect: { ...adminOnly, admin: 'hidden' } },
	{ route: '/api/admin/tokens', method: 'GET', path: '/api/admin/tokens', expect: adminOnly },
	{ route: '/api/admin/tokens', method: 'POST', path: '/api/admin/tokens', body: 'json', expect: adminOnly },
	{ route: '/api/admin/tokens/[id=id]', method: 'DELETE', path: '/api/admin/tokens/no-such-token', expect: { ...adminOnly, admin: 'hidden' } },
	{ route: '/api/admin/imports', method: 'GET', path: '/api/admin/imports', expect: adminOnly },
	{ route: '/api/admin/imports', method: 'POST', path: '/api/admin/imports', body: 'json', expect: adminOnly },
	{ route: '/api/admin/imports/[id=id]', method: 'DELETE', path: '/api/admin/imports/no-such-root', expect: { ...adminOnly, admin: 'hidden' } },
	{ route: '/api/admin/outbox', method: 'GET', path: '/api/admin/outbox', expect: adminOnly },
	{ route: '/api/admin/outbox/[id=id]', method: 'GET', path: '/api/admin/outbox/no-such-mail', expect: { ...adminOnly, admin: 'hidden' } },
	{ route: '/sessions/[id=id]', method: 'POST ?/align', path: '/sessions/{session}?/align', body: 'form', expect: editorOfSession },
	{ route: '/sessions/[id=id]', method: 'POST ?/clip', path: '/sessions/{session}?/clip', body: 'form', expect: editorOfSession },
	{ route: '/sessions/[id=id]', method: 'POST ?/cancelJob', path: '/sessions/{session}?/cancelJob', body: 'form', expect: editorOfSession },
	{ route: '/sessions/[id=id]', method: 'POST ?/retryJob', path: '/sessions/{session}?/retryJob', body: 'form', expect: editorOfSession },
	{ route: '/sessions/[id=id]', method: 'POST ?/archive', path: '/sessions/{session}?/archive', body: 'form', expect: editorOfSession },
	{ route: '/api/sessions/[id=id]/events', method: 'GET', path: '/api/sessions/{session}/events?once=1', expect: readSession },
	{ route: '/api/sessions/[id=id]/jobs', method: 'GET', path: '/api/sessions/{session}/jobs', expect: readSession },
	{ route: '/api/sessions/[id=id]/align', method: 'POST', path: '/api/sessions/{session}/align', body: 'json', expect: editorOfSession },
	{ route: '/api/jobs/[id=id]/cancel', method: 'POST', path: '/api/jobs/no-such-job/cancel', body: 'json', expect: editorProbe },
	{ route: '/api/jobs/[id=id]/retry', method: 'POST', path: '/api/jobs/no-such-job/retry', body: 'json', expect: editorProbe },
	{ route: '/api/clips/[id=id]', method: 'GET', path: '/api/clips/no-such-clip', expect: readProbe },
	{ route: '/api/clips/[id=id]', method: 'PATCH', path: '/api/clips/no-such-clip', body: 'json', expect: editorProbe },
	{ route: '/api/clips/[id=id]/peaks', method: 'GET', path: '/api/clips/no-such-clip/peaks?end=1', expect: readProbe },
	{ route: '/api/clips/[id=id]/samples', method: 'GET', path: '/api/clips/no-such-clip/samples?start=0&end=0.01', expect: readProbe },
	{ route: '/api/clips/[id=id]/proxy', method: 'GET', path: '/api/clips/no-such-clip/proxy', expect: readProbe },
	{ route: '/', method: 'GET', path: '/', expect: everyone },
	{ route: '/login', method: 'GET', path: '/login', expect: everyone },
	{ route: '/login', method: 'POST', path: '/login', body: 'form', expect: everyone },
	{ route: '/logout', method: 'POST', path: '/logout', body: 'form', endsSession: true, expect: everyone },
	{ route: '/workspace', method: 'POST', path: '/workspace', body: 'form', expect: { ...signedIn, admin: 'deny', editor: 'deny', reviewer: 'deny', processor: 'deny', outsider: 'deny' } },
	{ route: '/sessions', method: 'GET', path: '/sessions', expect: signedIn },
	{ route: '/sessions/new', method: 'GET', path: '/sessions/new', expect: editorOnly },
	{ route: '/sessions/new', method: 'POST', path: '/sessions/new', body: 'form', expect: editorOnly },
	{ route: '/sessions/[id=id]', method: 'GET', path: '/sessions/{session}', expect: readSession },
	{ route: '/sessions/[id=id]', method: 'POST ?/edit', path: '/sessions/{session}?/edit', body: 'form', expect: editorOfSession },
	{ route: '/api/me', method: 'GET', path: '/api/me', expect: signedIn },
	{ route: '/api/sessions', method: 'GET', path: '/api/sessions', expect: signedIn },
	{ route: '/api/sessions', method: 'POST', path: '/api/sessions', body: 'json', expect: editorOnly },
	{ route: '/api/sessions/[id=id]', method: 'GET', path: '/api/sessions/{session}', expect: readSession },
	{ route: '/api/sessions/[id=id]', method: 'PATCH', path: '/api/sessions/{session}', body: 'json', expect: editorOfSession },
	// Uploads (tus) and imports from server folders.
	{ route: '/api/uploads/[...path]', method: 'GET', path: '/api/uploads', expect: editorOnly },
	{ route: '/api/uploads/[...path]', method: 'POST', path: '/api/uploads', body: 'json', expect: editorOnly },
	{ route: '/api/uploads/[...path]', method: 'HEAD', path: '/api/uploads/0123456789abcdef0123456789abcdef', expect: editorProbe },
	{ route: '/api/uploads/[...path]', method: 'PATCH', path: '/api/uploads/0123456789abcdef0123456789abcdef', body: 'json', expect: editorProbe },
	{ route: '/api/uploads/[...path]', method: 'DELETE', path: '/api/uploads/0123456789abcdef0123456789abcdef', expect: editorProbe },
	{ route: '/api/import-roots', method: 'GET', path: '/api/import-roots', expect: { ...signedIn, reviewer: 'deny', processor: 'deny' } },
	{ route: '/api/import-roots/[id=id]/browse', method: 'GET', path: '/api/import-roots/no-such-root/browse', expect: { ...editorProbe, admin: 'hidden' } },
	{ route: '/api/sessions/[id=id]/imports', method: 'POST', path: '/api/sessions/{session}/imports', body: 'json', expect: editorOfSession },
	// The alignment workbench and its JSON routes.
	{ route: '/sessions/[id=id]/align', method: 'GET', path: '/sessions/{session}/align', expect: readSession },
	{ route: '/sessions/[id=id]/align', method: 'POST ?/placement', path: '/sessions/{session}/align?/placement', body: 'form', expect: editorOfSession },
	{ route: '/sessions/[id=id]/align', method: 'POST ?/reference', path: '/sessions/{session}/align?/reference', body: 'form', expect: editorOfSession },
	{ route: '/sessions/[id=id]/align', method: 'POST ?/lock', path: '/sessions/{session}/align?/lock', body: 'form', expect: editorOfSession },
	{ route: '/sessions/[id=id]/align', method: 'POST ?/usableSpan', path: '/sessions/{session}/align?/usableSpan', body: 'form', expect: editorOfSession },
	{ route: '/sessions/[id=id]/align', method: 'POST ?/trim', path: '/sessions/{session}/align?/trim', body: 'form', expect: editorOfSession },
	{ route: '/sessions/[id=id]/align', method: 'POST ?/revert', path: '/sessions/{session}/align?/revert', body: 'form', expect: editorOfSession },
	{ route: '/api/sessions/[id=id]/alignment', method: 'GET', path: '/api/sessions/{session}/alignment', expect: readSession },
	{ route: '/api/sessions/[id=id]/alignment', method: 'POST', path: '/api/sessions/{session}/alignment', body: 'json', expect: editorOfSession },
	{ route: '/api/sessions/[id=id]/revisions', method: 'GET', path: '/api/sessions/{session}/revisions', expect: readSession },
	{ route: '/api/sessions/[id=id]/revisions/[revision=id]/revert', method: 'POST', path: '/api/sessions/{session}/revisions/no-such-revision/revert', body: 'json', expect: editorOfSession },
	// Timing table: everyone of the workspace previews it; only a processor takes files away.
	{ route: '/sessions/[id=id]/export', method: 'GET', path: '/sessions/{session}/export', expect: readSession },
	{ route: '/api/sessions/[id=id]/timing-table', method: 'GET', path: '/api/sessions/{session}/timing-table?format=csv', expect: { anon: 'login', admin: 'deny', editor: 'deny', reviewer: 'deny', processor: 'allow', outsider: 'deny' } },
	// Review: everyone of the workspace reads it; an editor sends for review; a reviewer checks and decides.
	{ route: '/sessions/[id=id]/review', method: 'GET', path: '/sessions/{session}/review', expect: readSession },
	{ route: '/sessions/[id=id]/review', method: 'POST ?/send', path: '/sessions/{session}/review?/send', body: 'form', expect: editorOfSession },
	{ route: '/sessions/[id=id]/review', method: 'POST ?/check', path: '/sessions/{session}/review?/check', body: 'form', expect: reviewerOfSession },
	{ route: '/sessions/[id=id]/review', method: 'POST ?/decide', path: '/sessions/{session}/review?/decide', body: 'form', expect: reviewerOfSession },
	{ route: '/api/sessions/[id=id]/review', method: 'GET', path: '/api/sessions/{session}/review', expect: readSession },
	{ route: '/api/sessions/[id=id]/review/send', method: 'POST', path: '/api/sessions/{session}/review/send', body: 'json', expect: editorOfSession },
	{ route: '/api/sessions/[id=id]/review/checks', method: 'POST', path: '/api/sessions/{session}/review/checks', body: 'json', expect: reviewerOfSession },
	{ route: '/api/sessions/[id=id]/review/decision', method: 'POST', path: '/api/sessions/{session}/review/decision', body: 'json', expect: reviewerOfSession },
	{ route: '/api/sessions/[id=id]/review/marked-event', method: 'GET', path: '/api/sessions/{session}/review/marked-event', expect: readSession },
	{ route: '/api/clips/[id=id]/frames/[frame]', method: 'GET', path: '/api/clips/no-such-clip/frames/0', expect: readProbe }
];

export const ADMIN_ONLY = adminOnly;
