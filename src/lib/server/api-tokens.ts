import { and, desc, eq, isNull } from 'drizzle-orm';
import type { RoleName } from '$lib/permissions';
import { db } from './db';
import { apiTokens, workspaces } from './db/schema';
import { hashToken, newId, newSecretToken } from './ids';

const TOKEN_PREFIX = 'lst_';

export interface TokenIdentity {
	tokenId: string;
	tokenName: string;
	role: RoleName;
	workspace: { id: string; name: string; slug: string };
}

/** Resolves a bearer token to its workspace and role, or null when unknown or revoked. */
export function identifyToken(secret: string): TokenIdentity | null {
	if (!secret.startsWith(TOKEN_PREFIX)) return null;
	const row = db
		.select({ token: apiTokens, workspace: workspaces })
		.from(apiTokens)
		.innerJoin(workspaces, eq(workspaces.id, apiTokens.workspaceId))
		.where(and(eq(apiTokens.tokenHash, hashToken(secret)), isNull(apiTokens.revokedAt)))
		.get();
	if (!row) return null;
	db.update(apiTokens).set({ lastUsedAt: new Date() }).where(eq(apiTokens.id, row.token.id)).run();
	return {
		tokenId: row.token.id,
		tokenName: row.token.name,
		role: row.token.role,
		workspace: { id: row.workspace.id, name: row.workspace.name, slug: row.workspace.slug }
	};
}

/** Creates a token and returns its secret, which is shown once and never stored. */
export function createApiToken(input: { workspaceId: string; name: string; role: RoleName; createdBy: string }) {
	const secret = TOKEN_PREFIX + newSecretToken(24);
	const id = newId();
	db.insert(apiTokens)
		.values({
			id,
			workspaceId: input.workspaceId,
			name: input.name,
			role: input.role,
			prefix: secret.slice(0, 10),
			tokenHash: hashToken(secret),
			createdBy: input.createdBy
		})
		.run();
	return { id, secret };
}

export function listApiTokens(workspaceId: string) {
	return db
		.select({
			id: apiTokens.id,
			name: apiTokens.name,
			role: apiTokens.role,
			prefix: apiTokens.prefix,
			createdAt: apiTokens.createdAt,
			lastUsedAt: apiTokens.lastUsedAt,
			revokedAt: apiTokens.revokedAt
		})
		.from(apiTokens)
		.where(eq(apiTokens.workspaceId, workspaceId))
		.orderBy(desc(apiTokens.createdAt))
		.all();
}

/** Revokes a token of this workspace; false when there is no such token here. */
export function revokeApiToken(workspaceId: string, tokenId: string): boolean {
	const result = db
		.update(apiTokens)
		.set({ revokedAt: new Date() })
		.where(and(eq(apiTokens.id, tokenId), eq(apiTokens.workspaceId, workspaceId), isNull(apiTokens.revokedAt)))
		.run();
	return result.changes > 0;
}
