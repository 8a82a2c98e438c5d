import { z } from 'zod';
import { ROLE_NAMES } from '$lib/permissions';
import { createApiToken, listApiTokens, revokeApiToken } from './api-tokens';
import { Refusal, parseInput } from './refusal';
import type { WorkspaceScope } from './scope';

/*
 * Managing a workspace's API tokens. Only a signed-in person may create one, so a
 * leaked token can never mint itself a successor.
 */

export const TokenFields = z.object({
	name: z.string().trim().min(1, 'Name the token after the script or machine that will use it.').max(80, 'Keep the name under 80 characters.'),
	role: z.enum(ROLE_NAMES, 'Choose the role the token acts with.')
});

export function listTokens(scope: WorkspaceScope) {
	return listApiTokens(scope.workspaceId);
}

export function createToken(scope: WorkspaceScope, input: unknown, createdBy: string | null) {
	const fields = parseInput(TokenFields, input);
	if (!createdBy) throw new Refusal('person_required', 'API tokens are created by a signed-in admin, not by another token.', 403);
	const { id, secret } = createApiToken({ workspaceId: scope.workspaceId, name: fields.name, role: fields.role, createdBy });
	const token = listApiTokens(scope.workspaceId).find((t) => t.id === id);
	if (!token) throw new Error('API token vanished after insert');
	return { token, secret };
}

export function revokeToken(scope: WorkspaceScope, tokenId: string): void {
	if (!revokeApiToken(scope.workspaceId, tokenId)) {
		throw new Refusal('not_found', 'No active API token with that id in this workspace.', 404);
	}
}
