import { error } from '@sveltejs/kit';
import { codeFor } from '$lib/server/http';
import { hasRole } from '$lib/domain/roles';
import { requireUser } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { attempt } from '$lib/server/services/errors';
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
import { groupSchema, memberSchema } from '$lib/validation/groups';
import { runForm } from '$lib/server/forms';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const id = idParam(event.params.id, 'The group');
	const found = await attempt(() => groupFor(user, id));
	if (!found.ok)
		error(found.error.status, {
			message: found.error.message,
			code: found.error.code ?? codeFor(found.error.status)
		});
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

/** A decision on one member, by the group's PI or a manager (the service checks which). */
async function act(
	event: RequestEvent,
	call: (actor: ReturnType<typeof requireUser>, groupId: number, userId: number) => Promise<unknown>
) {
	const actor = requireUser(event);
	const groupId = idParam(event.params.id, 'The group');
	return runForm(event.request, memberSchema, async ({ userId }) => {
		await call(actor, groupId, userId);
		return { done: true };
	});
}

export const actions: Actions = {
	remove: (event) => act(event, removeMember),
	approve: (event) =>
		act(event, (actor, groupId, userId) => decideMembership(actor, groupId, userId, true)),
	decline: (event) =>
		act(event, (actor, groupId, userId) => decideMembership(actor, groupId, userId, false)),
	edit: async (event) => {
		const user = requireUser(event);
		const id = idParam(event.params.id, 'The group');
		return runForm(
			event.request,
			groupSchema,
			async (group) => {
				await saveGroup(user, group, id);
				return { saved: true };
			},
			{ booleans: ['external'] }
		);
	}
};
