import { error, redirect, type RequestEvent } from '@sveltejs/kit';
import { can, type Permission, type RoleName } from '$lib/permissions';
import { WorkspaceScope } from './scope';

export interface Allowed {
	scope: WorkspaceScope;
	role: RoleName;
	/** The person acting, or null for an API token. */
	userId: string | null;
	tokenId: string | null;
}

type GuardEvent = Pick<RequestEvent, 'locals' | 'url'>;

function isApi(event: GuardEvent): boolean {
	return event.url.pathname.startsWith('/api/');
}

/** Anyone signed in (or holding a token); pages send the others to the sign-in page. */
export function requireSignedIn(event: GuardEvent): void {
	const { user, apiToken } = event.locals;
	if (user || apiToken) return;
	if (isApi(event)) error(401, { code: 'unauthenticated', message: 'Sign in, or send an API token as "Authorization: Bearer <token>".' });
	redirect(303, `/login?next=${encodeURIComponent(event.url.pathname + event.url.search)}`);
}

/**
 * The one gate for loads, actions and API routes: the caller must hold `permission`
 * in the current workspace. Returns the workspace scope every domain query goes through.
 */
export function requirePermission(event: GuardEvent, permission: Permission): Allowed {
	requireSignedIn(event);
	const { workspace, role, user, apiToken } = event.locals;
	if (!workspace || !role) {
		error(403, { code: 'no_workspace', message: 'You are not a member of any workspace yet; ask an admin to invite you.' });
	}
	if (!can(role, permission)) {
		error(403, { code: 'forbidden', message: `Your role (${role}) cannot do this here.` });
	}
	return {
		scope: new WorkspaceScope(workspace.id),
		role,
		userId: user?.id ?? null,
		tokenId: apiToken?.id ?? null
	};
}
