import { error } from '@sveltejs/kit';
import { codeFor } from '$lib/server/http';
import { hasRole } from '$lib/domain/roles';
import { requireUser } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { attempt } from '$lib/server/services/errors';
import {
	activePeople,
	decideMembership,
	groupBookingsList,
	groupBookingsPage,
	groupFor,
	membersOf,
	removeMember,
	saveGroup
} from '$lib/server/services/groups';
import { readListQuery } from '$lib/domain/listing';
import { recentMonths, usageThisMonth } from '$lib/server/services/statements';
import { groupSchema, memberSchema } from '$lib/validation/groups';
import { runConfirmedForm, runForm, type Ask } from '$lib/server/forms';
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
		groupBookingsPage(id, readListQuery(event.url.searchParams, groupBookingsList), now),
		usageThisMonth(group, now),
		recentMonths(now)
	]);
	const isManager = hasRole(user.role, 'manager');
	return {
		group,
		members,
		bookings: recent.rows,
		bookingsView: recent.view,
		usage,
		months: months.slice(0, 6),
		isManager,
		people: isManager ? await activePeople() : []
	};
};

/** A decision on one member, by the group's PI or a manager (the service checks which). */
async function act(
	event: RequestEvent,
	call: (
		actor: ReturnType<typeof requireUser>,
		groupId: number,
		userId: number
	) => Promise<unknown>,
	ask?: (
		group: Awaited<ReturnType<typeof groupFor>>,
		person: Awaited<ReturnType<typeof membersOf>>[number]
	) => Ask | null
) {
	const actor = requireUser(event);
	const groupId = idParam(event.params.id, 'The group');
	const done = async ({ userId }: { userId: number }) => {
		await call(actor, groupId, userId);
		return { done: true };
	};
	if (!ask) return runForm(event.request, memberSchema, done);
	return runConfirmedForm(
		event.request,
		memberSchema,
		// Who it is, once the actor may see the group; someone not in it is the service's refusal.
		async ({ userId }) => {
			const group = await groupFor(actor, groupId);
			const person = (await membersOf(groupId)).find((m) => m.userId === userId);
			return person ? ask(group, person) : null;
		},
		done
	);
}

export const actions: Actions = {
	remove: (event) =>
		act(event, removeMember, (group, person) =>
			// The PI is refused by the service: there is nothing to confirm.
			person.userId === group.piUserId
				? null
				: {
						title:
							person.status === 'pending'
								? `Remove ${person.name}’s request to join ${group.name}?`
								: `Remove ${person.name} from ${group.name}?`,
						message:
							'Their bookings still ahead are billed to their other group (or to none); what they booked so far stays with this group.',
						yes: 'Yes, remove them'
					}
		),
	approve: (event) =>
		act(event, (actor, groupId, userId) => decideMembership(actor, groupId, userId, true)),
	decline: (event) =>
		act(
			event,
			(actor, groupId, userId) => decideMembership(actor, groupId, userId, false),
			// A new registration is decided on the approvals page: the service refuses it here.
			(group, person) =>
				person.status !== 'pending' || person.accountStatus === 'pending'
					? null
					: {
							title: `Decline ${person.name}’s request to join ${group.name}?`,
							message: 'They are not added to the group; they may ask again later.',
							yes: 'Yes, decline'
						}
		),
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
