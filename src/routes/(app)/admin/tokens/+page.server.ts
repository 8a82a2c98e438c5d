import { z } from 'zod';
import { requirePermission } from '$lib/server/guard';
import { publicOrigin } from '$lib/server/links';
import { formFields, formRefusal, parseInput } from '$lib/server/refusal';
import { createToken, listTokens, revokeToken } from '$lib/server/token-admin';
import type { Actions, PageServerLoad } from './$types';

export const load = ((event) => {
	const { scope } = requirePermission(event, 'tokens:manage');
	return { tokens: listTokens(scope), origin: publicOrigin(event.url) };
}) satisfies PageServerLoad;

const TokenTarget = z.object({ tokenId: z.string().min(1, 'Choose a token.') });

export const actions = {
	create: async (event) => {
		const { scope, userId } = requirePermission(event, 'tokens:manage');
		const fields = formFields(await event.request.formData());
		try {
			const { token, secret } = createToken(scope, fields, userId);
			return { action: 'create' as const, created: { name: token.name, role: token.role, secret } };
		} catch (err) {
			return formRefusal(err, { action: 'create' as const, name: fields.name ?? '', role: fields.role ?? '' });
		}
	},
	revoke: async (event) => {
		const { scope } = requirePermission(event, 'tokens:manage');
		const fields = formFields(await event.request.formData());
		try {
			const { tokenId } = parseInput(TokenTarget, fields);
			revokeToken(scope, tokenId);
			return { action: 'revoke' as const, done: 'Token revoked. Requests that send it are now refused.' };
		} catch (err) {
			return formRefusal(err, { action: 'revoke' as const, tokenId: fields.tokenId ?? '' });
		}
	}
} satisfies Actions;
