import { DrizzleSQLiteAdapter } from '@lucia-auth/adapter-drizzle';
import { Lucia } from 'lucia';
import { dev } from '$app/environment';
import { db } from './db';
import { authSessions, users } from './db/schema';

const adapter = new DrizzleSQLiteAdapter(db, authSessions, users);

export const lucia = new Lucia(adapter, {
	sessionCookie: {
		name: 'lockstep_session',
		attributes: {
			// SameSite=Lax and httpOnly are lucia's defaults; Secure outside development.
			secure: !dev && process.env.INSECURE_COOKIES !== '1'
		}
	},
	getUserAttributes: (attributes) => ({
		email: attributes.email,
		displayName: attributes.displayName,
		active: attributes.active
	})
});

declare module 'lucia' {
	interface Register {
		Lucia: typeof lucia;
		DatabaseUserAttributes: { email: string; displayName: string; active: boolean };
	}
}

export { hashPassword, verifyPassword, passwordProblem, PASSWORD_RULE } from './passwords';
