import { can } from '$lib/permissions';
import { requirePermission } from '$lib/server/guard';
import { publicOrigin } from '$lib/server/links';
import { formFields, formRefusal, Refusal } from '$lib/server/refusal';
import { actorOf, decideReview, instantPickOf, recordSpotCheck, reviewInstants, reviewOf, sendForReview, type InstantPick, type ReviewInstants } from '$lib/server/review';
import type { Actions, PageServerLoad } from './$types';

const DEFAULT_PICK: InstantPick = { count: 3, at: [] };

export const load = (async (event) => {
	const { scope, role } = requirePermission(event, 'sessions:read');
	const review = reviewOf(scope, event.params.id);
	let instants: ReviewInstants | null = null;
	let problem: string | null = null;
	let pick: InstantPick = DEFAULT_PICK;
	try {
		pick = instantPickOf(event.url.searchParams) ?? DEFAULT_PICK;
		instants = await reviewInstants(scope, event.params.id, pick);
	} catch (e) {
		if (!(e instanceof Refusal)) throw e;
		problem = e.message;
	}
	return {
		...review,
		instants,
		pick,
		problem,
		canSend: can(role, 'review:send'),
		canCheck: can(role, 'review:check'),
		canDecide: can(role, 'review:decide')
	};
}) satisfies PageServerLoad;

const numberOrNull = (text: string | undefined) => (text === undefined || text.trim() === '' ? null : Number(text));

export const actions = {
	send: async (event) => {
		const { scope, userId } = requirePermission(event, 'review:send');
		scope.session(event.params.id);
		const fields = formFields(await event.request.formData());
		try {
			await sendForReview(scope, event.params.id, actorOf(userId), { version: numberOrNull(fields.version), note: fields.note ?? '' }, publicOrigin(event.url));
			return { saved: 'Sent for review. The workspace’s reviewers have been told.' };
		} catch (e) {
			return formRefusal(e, fields);
		}
	},
	check: async (event) => {
		const { scope, userId } = requirePermission(event, 'review:check');
		scope.session(event.params.id);
		const data = await event.request.formData();
		const fields = formFields(data);
		const marks = data.getAll('mark').filter((m) => typeof m === 'string');
		try {
			await recordSpotCheck(scope, event.params.id, actorOf(userId), {
				version: numberOrNull(fields.version),
				instantSeconds: numberOrNull(fields.instantSeconds),
				verdict: fields.verdict,
				offByFrames: fields.verdict === 'off' ? numberOrNull(fields.offByFrames) : null,
				note: fields.note ?? '',
				marks: marks.length ? marks : null
			});
			return { saved: `Spot check at ${Number(fields.instantSeconds).toFixed(3)} s recorded.`, checkedInstant: fields.instantSeconds };
		} catch (e) {
			return formRefusal(e, fields);
		}
	},
	decide: async (event) => {
		const { scope, userId } = requirePermission(event, 'review:decide');
		scope.session(event.params.id);
		const fields = formFields(await event.request.formData());
		try {
			await decideReview(scope, event.params.id, actorOf(userId), { version: numberOrNull(fields.version), decision: fields.decision, note: fields.note ?? '' }, publicOrigin(event.url));
			return { saved: fields.decision === 'approve' ? 'Approved. The editors and processors have been told.' : 'Sent back to the editors with your notes.' };
		} catch (e) {
			return formRefusal(e, fields);
		}
	}
} satisfies Actions;
