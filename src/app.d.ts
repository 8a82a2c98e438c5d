import type { Session } from 'lucia';
import type { RoleName } from '$lib/permissions';

declare global {
	namespace App {
		interface Error {
			message: string;
			/** Machine-readable reason, answered by the JSON API as error.code. */
			code?: string;
		}
		interface Locals {
			user: { id: string; email: string; displayName: string } | null;
			session: Session | null;
			/** Set when the request authenticated with `Authorization: Bearer`. */
			apiToken: { id: string; name: string } | null;
			workspace: { id: string; name: string; slug: string } | null;
			role: RoleName | null;
			memberships: { workspaceId: string; workspaceName: string; role: RoleName }[];
		}
		// interface PageData {}
		// interface PageState {}
		// interface Platform {}
	}
}

export {};
