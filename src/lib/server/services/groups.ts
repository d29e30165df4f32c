// Research groups: who leads them, who is in them, and what their people booked.
import { and, asc, count, desc, eq, gte, inArray, lt, ne, sql } from 'drizzle-orm';
import { bookingStatuses, openStatuses, type BookingStatus } from '$lib/domain/bookings';
import type { ListQuery, ListSpec } from '$lib/domain/listing';
import { hasRole } from '$lib/domain/roles';
import { db } from '../db';
import { defaultGroupId } from '../db/queries';
import {
	bookings,
	boxes,
	certifications,
	groupMemberships,
	researchGroups,
	trainingModules,
	users
} from '../db/schema';
import type { Actor } from './accounts';
import { audit } from './audit';
import { forbidden, isDuplicateKey, notFound, ServiceError } from './errors';
import { certificationState, standingByPersonAndModule } from '$lib/domain/certifications';
import { transaction } from '../db/transaction';
import { matchesWords, orderOf, pageInSql } from '../listing';

/** Group names for the registration form (no PI or cost centre: that page is public). */
export async function listGroupNames() {
	return db
		.select({ id: researchGroups.id, name: researchGroups.name })
		.from(researchGroups)
		.orderBy(asc(researchGroups.name));
}

const groupColumns = {
	id: researchGroups.id,
	name: researchGroups.name,
	costCentre: researchGroups.costCentre,
	external: researchGroups.external,
	piUserId: researchGroups.piUserId,
	piName: users.name
};

/** Managers see every group; a PI the groups they lead; others none. */
export async function groupsFor(actor: Actor) {
	const base = db
		.select(groupColumns)
		.from(researchGroups)
		.leftJoin(users, eq(users.id, researchGroups.piUserId))
		.$dynamic();
	const rows = hasRole(actor.role, 'manager')
		? await base.orderBy(asc(researchGroups.name))
		: await base.where(eq(researchGroups.piUserId, actor.id)).orderBy(asc(researchGroups.name));
	return rows;
}

/**
 * The group, when the actor may act on it: a manager, or the group's PI. Anyone else gets
 * 403 (the group exists: its name is on the public registration form anyway).
 */
export async function groupFor(actor: Actor, groupId: number) {
	const [group] = await db
		.select(groupColumns)
		.from(researchGroups)
		.leftJoin(users, eq(users.id, researchGroups.piUserId))
		.where(eq(researchGroups.id, groupId));
	if (!group) throw notFound('The group');
	if (!hasRole(actor.role, 'manager') && group.piUserId !== actor.id)
		throw forbidden('Only the group’s PI or a facility manager can see this group.');
	return group;
}

/** Members (active and asking to join) with where their training stands. */
export async function membersOf(groupId: number, now = new Date()) {
	const members = await db
		.select({
			userId: users.id,
			name: users.name,
			email: users.email,
			accountStatus: users.status,
			status: groupMemberships.status,
			requestedAt: groupMemberships.requestedAt
		})
		.from(groupMemberships)
		.innerJoin(users, eq(users.id, groupMemberships.userId))
		.where(and(eq(groupMemberships.groupId, groupId), ne(groupMemberships.status, 'removed')))
		.orderBy(asc(users.name));
	const ids = members.map((m) => m.userId);
	const certs = ids.length
		? await db
				.select({
					userId: certifications.userId,
					moduleId: certifications.moduleId,
					moduleName: trainingModules.name,
					grantedAt: certifications.grantedAt,
					expiresAt: certifications.expiresAt,
					revokedAt: certifications.revokedAt
				})
				.from(certifications)
				.innerJoin(trainingModules, eq(trainingModules.id, certifications.moduleId))
				.where(inArray(certifications.userId, ids))
				.orderBy(desc(certifications.grantedAt))
		: [];
	const byKey = standingByPersonAndModule(certs, now);
	return members.map((m) => ({
		...m,
		certifications: [...byKey.values()]
			.filter((c) => c.userId === m.userId)
			.map((c) => ({
				moduleName: c.moduleName,
				expiresAt: c.expiresAt,
				state: certificationState(c, now)
			}))
	}));
}

/** A facility's groups are few: sorted and searched in memory. */
export const groupsList = {
	sorts: ['name', 'pi', 'costCentre'],
	defaultSort: 'name',
	defaultDir: 'asc',
	filters: { rates: ['internal', 'external'] },
	perPage: 50
} as const satisfies ListSpec;

/** A group's bookings grow with every month: paged in SQL. */
export const groupBookingsList = {
	sorts: ['when', 'box', 'who', 'status'],
	defaultSort: 'when',
	defaultDir: 'desc',
	filters: { period: ['ahead', 'past', 'all'], status: bookingStatuses },
	perPage: 25
} as const satisfies ListSpec;

export type GroupBookingsQuery = ListQuery<
	(typeof groupBookingsList.sorts)[number],
	'period' | 'status'
>;

/** Without a period chosen, the list covers the last month and what is ahead. */
export const RECENT_DAYS = 31;

/**
 * One page of the group's bookings, with the total: by default from a month ago on (every
 * booking ahead included), or only those ahead, only past ones, or all; found by who booked,
 * the box or the purpose.
 */
export async function groupBookingsPage(
	groupId: number,
	query: GroupBookingsQuery,
	now = new Date()
) {
	const period = query.filters.period;
	const where = and(
		eq(bookings.groupId, groupId),
		period === 'ahead'
			? gte(bookings.endAt, now)
			: period === 'past'
				? lt(bookings.endAt, now)
				: period === 'all'
					? undefined
					: gte(bookings.endAt, new Date(now.getTime() - RECENT_DAYS * 86_400_000)),
		query.filters.status ? eq(bookings.status, query.filters.status as BookingStatus) : undefined,
		matchesWords(query.q, [users.name, boxes.name, bookings.purpose])
	);
	return pageInSql(
		query,
		async () => {
			const [row] = await db
				.select({ n: count() })
				.from(bookings)
				.innerJoin(boxes, eq(boxes.id, bookings.boxId))
				.innerJoin(users, eq(users.id, bookings.userId))
				.where(where);
			return row.n;
		},
		(limit, offset) =>
			db
				.select({
					id: bookings.id,
					boxName: boxes.name,
					userName: users.name,
					startAt: bookings.startAt,
					endAt: bookings.endAt,
					status: bookings.status,
					cancelCause: bookings.cancelCause,
					purpose: bookings.purpose,
					checkInAt: bookings.checkInAt,
					checkOutAt: bookings.checkOutAt
				})
				.from(bookings)
				.innerJoin(boxes, eq(boxes.id, bookings.boxId))
				.innerJoin(users, eq(users.id, bookings.userId))
				.where(where)
				.orderBy(
					...orderOf(
						query,
						{ when: bookings.startAt, box: boxes.name, who: users.name, status: bookings.status },
						bookings.id
					)
				)
				.limit(limit)
				.offset(offset)
	);
}

async function membership(groupId: number, userId: number) {
	const [row] = await db
		.select()
		.from(groupMemberships)
		.where(and(eq(groupMemberships.groupId, groupId), eq(groupMemberships.userId, userId)));
	return row ?? null;
}

/** The PI or a manager removes a member; their past bookings stay billed to the group. */
export async function removeMember(actor: Actor, groupId: number, userId: number) {
	const group = await groupFor(actor, groupId);
	if (group.piUserId === userId)
		throw new ServiceError(409, 'The PI cannot be removed; a manager can name another PI first.');
	const row = await membership(groupId, userId);
	if (!row || row.status === 'removed') throw notFound('That member');
	await transaction(async (tx) => {
		await tx
			.update(groupMemberships)
			.set({ status: 'removed', decidedAt: new Date(), decidedBy: actor.id })
			.where(eq(groupMemberships.id, row.id));
		// Bookings still ahead go to the person's remaining group (or none); past ones stay.
		await tx.execute(sql`
			UPDATE bookings SET group_id = ${defaultGroupId(userId)}
			WHERE user_id = ${userId} AND group_id = ${groupId} AND start_at > ${new Date()}
				AND ${inArray(bookings.status, openStatuses)}`);
		await audit(tx, {
			actorId: actor.id,
			action: 'group.member_removed',
			entity: 'group',
			entityId: groupId,
			details: { userId }
		});
	});
}

/** The PI or a manager decides an active user's request to join (registrations go through approvals). */
export async function decideMembership(
	actor: Actor,
	groupId: number,
	userId: number,
	approve: boolean
) {
	await groupFor(actor, groupId);
	const row = await membership(groupId, userId);
	if (!row || row.status !== 'pending') throw notFound('That request');
	const [person] = await db
		.select({ status: users.status })
		.from(users)
		.where(eq(users.id, userId));
	if (person?.status === 'pending')
		throw new ServiceError(409, 'This is a new registration; decide it on the approvals page.');
	await transaction(async (tx) => {
		await tx
			.update(groupMemberships)
			.set({ status: approve ? 'active' : 'removed', decidedAt: new Date(), decidedBy: actor.id })
			.where(eq(groupMemberships.id, row.id));
		await audit(tx, {
			actorId: actor.id,
			action: approve ? 'group.member_approved' : 'group.member_declined',
			entity: 'group',
			entityId: groupId,
			details: { userId }
		});
	});
}

/** A signed-in person asks to join another group; its PI decides. */
export async function requestMembership(actor: Actor, groupId: number) {
	const [group] = await db
		.select({ id: researchGroups.id })
		.from(researchGroups)
		.where(eq(researchGroups.id, groupId));
	if (!group) throw notFound('The group');
	const row = await membership(groupId, actor.id);
	if (row?.status === 'active') throw new ServiceError(409, 'You are already in this group.');
	if (row?.status === 'pending') throw new ServiceError(409, 'Your request is already waiting.');
	await transaction(async (tx) => {
		if (row)
			await tx
				.update(groupMemberships)
				.set({ status: 'pending', requestedAt: new Date(), decidedAt: null, decidedBy: null })
				.where(eq(groupMemberships.id, row.id));
		else await tx.insert(groupMemberships).values({ groupId, userId: actor.id, status: 'pending' });
		await audit(tx, {
			actorId: actor.id,
			action: 'group.join_requested',
			entity: 'group',
			entityId: groupId
		});
	});
}

export type GroupInput = {
	name: string;
	costCentre: string;
	piUserId: number | null;
	external: boolean;
};

/** Managers create and edit groups; the PI named becomes an active member. */
export async function saveGroup(actor: Actor, input: GroupInput, groupId?: number) {
	if (!hasRole(actor.role, 'manager')) throw forbidden('Only a manager can create or edit groups.');
	try {
		return await transaction(async (tx) => {
			let id = groupId;
			if (id) {
				const [found] = await tx
					.select({ id: researchGroups.id })
					.from(researchGroups)
					.where(eq(researchGroups.id, id));
				if (!found) throw notFound('The group');
				await tx.update(researchGroups).set(input).where(eq(researchGroups.id, id));
			} else {
				[{ id }] = await tx.insert(researchGroups).values(input).$returningId();
			}
			if (input.piUserId) {
				const [pi] = await tx
					.select({ id: users.id })
					.from(users)
					.where(and(eq(users.id, input.piUserId), eq(users.status, 'active')));
				if (!pi)
					throw new ServiceError(400, 'Choose an active person as PI.', {
						fields: { piUserId: 'Choose an active person as PI.' }
					});
				await tx
					.insert(groupMemberships)
					.values({ groupId: id!, userId: input.piUserId, status: 'active' })
					.onDuplicateKeyUpdate({ set: { status: 'active' } });
			}
			await audit(tx, {
				actorId: actor.id,
				action: groupId ? 'group.updated' : 'group.created',
				entity: 'group',
				entityId: id!,
				details: input
			});
			return id!;
		});
	} catch (e) {
		if (isDuplicateKey(e))
			throw new ServiceError(409, 'A group of that name exists.', {
				fields: { name: 'A group of that name exists.' }
			});
		throw e;
	}
}

/** Active people, for choosing a PI. */
export async function activePeople() {
	return db
		.select({ id: users.id, name: users.name, email: users.email })
		.from(users)
		.where(eq(users.status, 'active'))
		.orderBy(asc(users.name));
}
