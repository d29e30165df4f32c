// Monthly statements per group: worked out from the bookings while a month is open, read
// from the snapshot taken when a manager closed it, so closed figures never change.
import { and, asc, desc, eq, gt, inArray, lt, sql } from 'drizzle-orm';
import { DateTime } from 'luxon';
import { toCents } from '$lib/domain/money';
import { hasRole } from '$lib/domain/roles';
import {
	monthBounds,
	monthIsOver,
	parseMonth,
	statement,
	statementFromSnapshot,
	type UsageBooking
} from '$lib/domain/usage';
import { config } from '../config';
import { db, type Transaction } from '../db';
import { startsFrom } from '../db/queries';
import {
	bookings,
	boxes,
	closedMonths,
	researchGroups,
	statementSnapshots,
	users
} from '../db/schema';
import type { Actor } from './accounts';
import { audit } from './audit';
import { forbidden, isDuplicateKey, ServiceError } from './errors';
import { groupFor } from './groups';
import { transaction } from '../db/transaction';

type GroupRef = { id: number; external: boolean };

/** The month named, or a 400 saying how to write one. */
export function monthParam(text: string): string {
	const month = parseMonth(text);
	if (!month)
		throw new ServiceError(400, 'Give the month as YYYY-MM, e.g. 2026-10.', {
			fields: { month: 'Give the month as YYYY-MM.' }
		});
	return month;
}

/**
 * A DECIMAL(10,2) rate in cents, read from the text MariaDB sends (mysql2 gives DECIMAL as a
 * string), so the column's number mapping never turns it into a binary fraction first.
 */
const rateCents = (column: typeof boxes.rateInternal | typeof boxes.rateExternal) =>
	sql`${column}`.mapWith((value: string | number) => toCents(value));

/** A month's statement in the facility's zone and currency. */
const facilityStatement = (rows: UsageBooking[], month: string) =>
	statement(rows, month, config.facilityTz, config.facilityCurrency);

/**
 * The bookings of the given groups (all groups when omitted) that touch the month, each
 * with the rate that applies to its group, by group id: one indexed range read.
 */
async function usageBookings(
	q: Transaction | typeof db,
	month: string,
	groups?: GroupRef[]
): Promise<Map<number, UsageBooking[]>> {
	const { start, end } = monthBounds(month, config.facilityTz);
	const byGroup = new Map<number, UsageBooking[]>();
	if (groups && !groups.length) return byGroup;
	const rows = await q
		.select({
			id: bookings.id,
			groupId: bookings.groupId,
			external: researchGroups.external,
			boxId: bookings.boxId,
			boxName: boxes.name,
			userName: users.name,
			startAt: bookings.startAt,
			endAt: bookings.endAt,
			status: bookings.status,
			cancelCause: bookings.cancelCause,
			cancelledAt: bookings.cancelledAt,
			checkInAt: bookings.checkInAt,
			checkOutAt: bookings.checkOutAt,
			confirmedAt: bookings.confirmedAt,
			heldUntil: bookings.blockedUntil,
			rateInternal: rateCents(boxes.rateInternal),
			rateExternal: rateCents(boxes.rateExternal),
			cancelWindowHours: boxes.cancelWindowHours
		})
		.from(bookings)
		.innerJoin(researchGroups, eq(researchGroups.id, bookings.groupId))
		.innerJoin(boxes, eq(boxes.id, bookings.boxId))
		.innerJoin(users, eq(users.id, bookings.userId))
		.where(
			and(
				groups
					? inArray(
							bookings.groupId,
							groups.map((g) => g.id)
						)
					: undefined,
				startsFrom(start),
				lt(bookings.startAt, end),
				gt(bookings.endAt, start)
			)
		)
		.orderBy(asc(bookings.startAt));
	for (const { rateInternal, rateExternal, heldUntil, groupId, external, ...b } of rows) {
		const list = byGroup.get(groupId!) ?? [];
		list.push({
			...b,
			// blocked_until is when a no-show's slot was freed; for others it is not used.
			heldUntil: b.status === 'no_show' ? heldUntil : null,
			rateCents: external ? rateExternal : rateInternal
		});
		byGroup.set(groupId!, list);
	}
	return byGroup;
}

/** One group's month, worked out from its bookings now. */
async function liveStatement(group: GroupRef, month: string) {
	const rows = (await usageBookings(db, month, [group])).get(group.id) ?? [];
	return facilityStatement(rows, month);
}

async function closedMonth(month: string) {
	const [row] = await db
		.select({ closedAt: closedMonths.closedAt, closedBy: users.name })
		.from(closedMonths)
		.leftJoin(users, eq(users.id, closedMonths.closedBy))
		.where(eq(closedMonths.month, month));
	return row ?? null;
}

/**
 * A group's statement for a month that is over: its PI's or a manager's to see. A closed
 * month comes from its snapshot; an open one is worked out now and may still change.
 */
export async function statementFor(
	actor: Actor,
	groupId: number,
	monthText: string,
	now = new Date()
) {
	const group = await groupFor(actor, groupId);
	const month = monthParam(monthText);
	if (!monthIsOver(month, config.facilityTz, now))
		throw new ServiceError(
			422,
			`${month} is not over yet; its statement can be drawn up from ${DateTime.fromJSDate(monthBounds(month, config.facilityTz).end).setZone(config.facilityTz).toFormat('d LLLL yyyy')}.`,
			undefined,
			'month_not_over'
		);
	const closed = await closedMonth(month);
	if (closed) {
		const [snap] = await db
			.select({ statement: statementSnapshots.statement })
			.from(statementSnapshots)
			.where(and(eq(statementSnapshots.month, month), eq(statementSnapshots.groupId, groupId)));
		// A group with no snapshot had nothing to bill when the month was closed.
		const figures = snap
			? statementFromSnapshot(snap.statement, config.facilityCurrency)
			: facilityStatement([], month);
		return { group, statement: figures, closed };
	}
	return {
		group,
		statement: await liveStatement(group, month),
		closed: null
	};
}

/** The month so far, for the PI's dashboard: provisional, never a statement. */
export async function usageThisMonth(group: GroupRef, now = new Date()) {
	return (await usageThisMonthFor([group], now)).get(group.id)!;
}

/** The month so far for several groups, in one read. */
export async function usageThisMonthFor(groups: GroupRef[], now = new Date()) {
	const month = DateTime.fromJSDate(now).setZone(config.facilityTz).toFormat('yyyy-MM');
	const byGroup = await usageBookings(db, month, groups);
	return new Map(groups.map((g) => [g.id, facilityStatement(byGroup.get(g.id) ?? [], month)]));
}

/** Closes a month that is over: every group's statement is frozen as it stands now. */
export async function closeMonth(actor: Actor, monthText: string, now = new Date()) {
	if (!hasRole(actor.role, 'manager')) throw forbidden('Only a manager can close a month.');
	const month = monthParam(monthText);
	if (!monthIsOver(month, config.facilityTz, now))
		throw new ServiceError(422, `${month} is not over yet.`, undefined, 'month_not_over');
	try {
		return await closeIn(actor, month, now);
	} catch (e) {
		// Two managers closing the same month at once: the second finds it done.
		if (isDuplicateKey(e)) throw new ServiceError(409, `${month} is already closed.`);
		throw e;
	}
}

async function closeIn(actor: Actor, month: string, now: Date) {
	return transaction(async (tx) => {
		// On a cluster, two nodes closing one month both insert its primary key, which
		// certification refuses for one; run again, it finds the month closed.
		const [already] = await tx
			.select()
			.from(closedMonths)
			.where(eq(closedMonths.month, month))
			.for('update');
		if (already) throw new ServiceError(409, `${month} is already closed.`);
		await tx.insert(closedMonths).values({ month, closedBy: actor.id, closedAt: now });
		// Every group with a booking in the month, read at once; the others have nothing to freeze.
		const byGroup = await usageBookings(tx, month);
		const snapshots = [...byGroup]
			.map(([groupId, rows]) => ({
				month,
				groupId,
				statement: facilityStatement(rows, month)
			}))
			.filter((s) => s.statement.lines.length);
		if (snapshots.length) await tx.insert(statementSnapshots).values(snapshots);
		const frozen = snapshots.length;
		await audit(tx, {
			actorId: actor.id,
			action: 'month.closed',
			entity: 'month',
			entityId: month,
			details: { groups: frozen }
		});
		return { month, groups: frozen };
	});
}

/** The last twelve months that are over, each closed or not. */
export async function recentMonths(now = new Date()) {
	const closed = await db
		.select({ month: closedMonths.month, closedAt: closedMonths.closedAt, closedBy: users.name })
		.from(closedMonths)
		.leftJoin(users, eq(users.id, closedMonths.closedBy))
		.orderBy(desc(closedMonths.month));
	const current = DateTime.fromJSDate(now).setZone(config.facilityTz).startOf('month');
	return Array.from({ length: 12 }, (_, i) => {
		const month = current.minus({ months: i + 1 }).toFormat('yyyy-MM');
		const row = closed.find((c) => c.month === month);
		return { month, closedAt: row?.closedAt ?? null, closedBy: row?.closedBy ?? null };
	});
}
