import { z } from 'zod';
import { requirePermission } from '$lib/server/guard';
import { invitePerson, listPendingInvitations, withdrawInvitation } from '$lib/server/invitations';
import { publicOrigin } from '$lib/server/links';
import { changeRole, listMembers, removeMember, setActive } from '$lib/server/members';
import { formFields, formRefusal, parseInput } from '$lib/server/refusal';
import { ROLE_LABELS, ROLE_NAMES } from '$lib/permissions';
import type { Actions, PageServerLoad } from './$types';

export const load = ((event) => {
	const { scope, userId } = requirePermission(event, 'people:manage');
	return {
		members: listMembers(scope),
		invitations: listPendingInvitations(scope),
		selfId: userId
	};
}) satisfies PageServerLoad;

const MemberTarget = z.object({ userId: z.string().min(1, 'Choose a person.') });
const RoleTarget = MemberTarget.extend({ role: z.enum(ROLE_NAMES, 'Choose a role.') });
const InvitationTarget = z.object({ invitationId: z.string().min(1, 'Choose an invitation.') });

export const actions = {
	invite: async (event) => {
		const { scope, userId } = requirePermission(event, 'people:manage');
		const fields = formFields(await event.request.formData());
		try {
			const invitation = await invitePerson(scope, fields, { userId, origin: publicOrigin(event.url) });
			return { action: 'invite' as const, done: `Invitation sent to ${invitation.email}.` };
		} catch (err) {
			return formRefusal(err, { action: 'invite' as const, email: fields.email ?? '', role: fields.role ?? '' });
		}
	},
	role: async (event) => {
		const { scope } = requirePermission(event, 'people:manage');
		const fields = formFields(await event.request.formData());
		try {
			const { userId, role } = parseInput(RoleTarget, fields);
			const member = changeRole(scope, userId, role);
			return { action: 'role' as const, userId, done: `${member.displayName} is now ${ROLE_LABELS[member.role].toLowerCase()} here.` };
		} catch (err) {
			return formRefusal(err, { action: 'role' as const, userId: fields.userId ?? '' });
		}
	},
	deactivate: async (event) => {
		const { scope, userId: actingUserId } = requirePermission(event, 'people:manage');
		const fields = formFields(await event.request.formData());
		try {
			const { userId } = parseInput(MemberTarget, fields);
			const member = await setActive(scope, actingUserId, userId, false);
			return { action: 'deactivate' as const, userId, done: `${member.displayName} is deactivated and signed out.` };
		} catch (err) {
			return formRefusal(err, { action: 'deactivate' as const, userId: fields.userId ?? '' });
		}
	},
	reactivate: async (event) => {
		const { scope, userId: actingUserId } = requirePermission(event, 'people:manage');
		const fields = formFields(await event.request.formData());
		try {
			const { userId } = parseInput(MemberTarget, fields);
			const member = await setActive(scope, actingUserId, userId, true);
			return { action: 'reactivate' as const, userId, done: `${member.displayName} can sign in again.` };
		} catch (err) {
			return formRefusal(err, { action: 'reactivate' as const, userId: fields.userId ?? '' });
		}
	},
	remove: async (event) => {
		const { scope } = requirePermission(event, 'people:manage');
		const fields = formFields(await event.request.formData());
		try {
			const { userId } = parseInput(MemberTarget, fields);
			removeMember(scope, userId);
			return { action: 'remove' as const, userId, done: 'Removed from this workspace.' };
		} catch (err) {
			return formRefusal(err, { action: 'remove' as const, userId: fields.userId ?? '' });
		}
	},
	withdraw: async (event) => {
		const { scope } = requirePermission(event, 'people:manage');
		const fields = formFields(await event.request.formData());
		try {
			const { invitationId } = parseInput(InvitationTarget, fields);
			withdrawInvitation(scope, invitationId);
			return { action: 'withdraw' as const, done: 'Invitation withdrawn; its link no longer works.' };
		} catch (err) {
			return formRefusal(err, { action: 'withdraw' as const, invitationId: fields.invitationId ?? '' });
		}
	}
} satisfies Actions;
