import { error, fail } from '@sveltejs/kit';
import { hasRole } from '$lib/domain/roles';
import { requireUser } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { attempt, type Attempt } from '$lib/server/services/errors';
import {
	activePeople,
	decideMembership,
	groupBookings,
	groupFor,
	membersOf,
	removeMember,
	saveGroup
} from '$lib/server/services/groups';
import { recentMonths, usageThisMonth } from '$lib/server/services/statements';
import { fieldErrors } from '$lib/validation/fields';
import { groupSchema } from '$lib/validation/groups';
import { formId } from '$lib/server/forms';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const id = idParam(event.params.id, 'The group');
	const found = await attempt(() => groupFor(user, id));
	if (!found.ok)
		error(found.error.status, { message: found.error.message, code: found.error.code });
	const group = found.value;
	const now = new Date();
	const [members, recent, usage, months] = await Promise.all([
		membersOf(id, now),
		groupBookings(
			id,
			new Date(now.getTime() - 31 * 86_400_000),
			new Date(now.getTime() + 60 * 86_400_000)
		),
		usageThisMonth(group, now),
		recentMonths(now)
	]);
	const isManager = hasRole(user.role, 'manager');
	return {
		group,
		members,
		bookings: recent,
		usage,
		months: months.slice(0, 6),
		isManager,
		people: isManager ? await activePeople() : []
	};
};

async function act(
	event: Parameters<Actions[string]>[0],
	call: (userId: number) => Promise<unknown>
) {
	requireUser(event);
	const userId = formId((await event.request.formData()).get('userId'));
	const result: Attempt<unknown> = await attempt(() => call(userId));
	if (!result.ok) return fail(result.error.status, { message: result.error.message });
	return { done: true };
}

export const actions: Actions = {
	remove: (event) =>
		act(event, (userId) => removeMember(requireUser(event), idParam(event.params.id), userId)),
	approve: (event) =>
		act(event, (userId) =>
			decideMembership(requireUser(event), idParam(event.params.id), userId, true)
		),
	decline: (event) =>
		act(event, (userId) =>
			decideMembership(requireUser(event), idParam(event.params.id), userId, false)
		),
	edit: async (event) => {
		const user = requireUser(event);
		const id = idParam(event.params.id, 'The group');
		const values = Object.fromEntries(await event.request.formData()) as Record<string, string>;
		const parsed = groupSchema.safeParse(values);
		if (!parsed.success)
			return fail(400, { values, errors: fieldErrors(parsed.error), message: undefined });
		const result = await attempt(() => saveGroup(user, parsed.data, id));
		if (!result.ok)
			return fail(result.error.status, {
				values,
				errors: (result.error.details as { fields?: Record<string, string> })?.fields ?? {},
				message: result.error.message
			});
		return { saved: true };
	}
};
