import { error, redirect } from '@sveltejs/kit';
import { lucia } from '$lib/server/auth';
import { acceptInvitation, lookupInvitation } from '$lib/server/invitations';
import { formRefusal, formFields } from '$lib/server/refusal';
import { WORKSPACE_COOKIE } from '$lib/server/workspaces';
import { PASSWORD_RULE } from '$lib/server/passwords';
import type { Actions, PageServerLoad } from './$types';

const dateFormat = new Intl.DateTimeFormat('en-GB', { dateStyle: 'long', timeStyle: 'short', timeZone: 'UTC' });

export const load = (({ params, locals }) => {
	const invitation = lookupInvitation(params.token);
	if (invitation.state === 'unknown') error(404, { code: 'invitation_unknown', message: 'This invitation link is not valid.' });
	if (invitation.state === 'expired') {
		error(410, {
			code: 'invitation_expired',
			message: `This invitation to ${invitation.workspaceName} expired on ${dateFormat.format(invitation.expiresAt)} UTC.`
		});
	}
	if (invitation.state === 'used') {
		error(410, { code: 'invitation_used', message: `This invitation to ${invitation.workspaceName} has already been used.` });
	}
	return {
		invitation: {
			email: invitation.email,
			role: invitation.role,
			workspaceName: invitation.workspaceName,
			inviterName: invitation.inviterName,
			expiresAt: invitation.expiresAt,
			account: invitation.account
		},
		signedInAs: locals.user?.email ?? null,
		passwordRule: PASSWORD_RULE
	};
}) satisfies PageServerLoad;

export const actions = {
	default: async ({ params, request, locals, cookies, getClientAddress }) => {
		const fields = formFields(await request.formData());
		let accepted;
		try {
			accepted = await acceptInvitation(params.token, fields, {
				signedInUserId: locals.user?.id ?? null,
				clientAddress: getClientAddress()
			});
		} catch (err) {
			return formRefusal(err, { displayName: fields.displayName ?? '' });
		}
		if (accepted.sessionCookie) {
			// Whoever was signed in here before is signed out: the browser now belongs to the invitee.
			if (locals.session) await lucia.invalidateSession(locals.session.id);
			const { name, value, attributes } = accepted.sessionCookie;
			cookies.set(name, value, { path: '.', ...attributes });
		}
		cookies.set(WORKSPACE_COOKIE, accepted.workspaceId, { path: '/', httpOnly: true, sameSite: 'lax', maxAge: 60 * 60 * 24 * 365 });
		redirect(303, '/sessions');
	}
} satisfies Actions;
