// How bookings are shown, read only: the calendar's events (bookings, their purge buffers
// and outages in a range, for /api/boxes/:id/events and /api/events), a person's own list,
// the approvals list, and one booking as the API gives it. Times carry the facility zone's
// offset.
import type { CalendarEvent } from '$lib/domain/calendar-event';
import { and, asc, count, eq, gt, inArray, lt, lte, ne, or, sql } from 'drizzle-orm';
import type { ListQuery, ListSpec } from '$lib/domain/listing';
import { matchesWords, orderOf, pageInSql } from '../listing';
import { holderStatus, mayCancel } from '$lib/domain/booking-state';
import { holdingStatuses, type BookingStatus } from '$lib/domain/bookings';
import { hasRole, type Role } from '$lib/domain/roles';
import { isoInZone } from '$lib/domain/time';
import { config } from '../config';
import { db } from '../db';
import { startsFrom } from '../db/queries';
import { bookings, boxes, outages, users, type Booking } from '../db/schema';

export type PublicBooking = {
	id: number;
	boxId: number;
	userId: number;
	start: string;
	end: string;
	purgeUntil: string | null;
	purpose: string;
	chemicalClasses: string[];
	volatileSolvents: boolean;
	status: BookingStatus;
	cancelReason: string | null;
	cancelCause: string | null;
	/** The outage that cancelled it, when one did. */
	outageId: number | null;
	/** The first booking of the weekly series it was made in, or null. */
	seriesId: number | null;
};

type BookingView = Pick<
	Booking,
	| 'id'
	| 'boxId'
	| 'userId'
	| 'startAt'
	| 'endAt'
	| 'blockedUntil'
	| 'purpose'
	| 'chemicalClasses'
	| 'volatileSolvents'
	| 'status'
	| 'cancelReason'
	| 'cancelCause'
	| 'outageId'
	| 'seriesId'
>;

export function toPublic(b: BookingView, tz = config.facilityTz): PublicBooking {
	return {
		id: b.id,
		boxId: b.boxId,
		userId: b.userId,
		start: isoInZone(b.startAt, tz),
		end: isoInZone(b.endAt, tz),
		purgeUntil: b.blockedUntil > b.endAt ? isoInZone(b.blockedUntil, tz) : null,
		purpose: b.purpose,
		chemicalClasses: b.chemicalClasses,
		volatileSolvents: b.volatileSolvents,
		status: b.status,
		cancelReason: b.cancelReason,
		cancelCause: b.cancelCause,
		outageId: b.outageId,
		seriesId: b.seriesId
	};
}

const ownColumns = {
	id: bookings.id,
	boxId: bookings.boxId,
	boxName: boxes.name,
	gas: boxes.gas,
	startAt: bookings.startAt,
	endAt: bookings.endAt,
	purpose: bookings.purpose,
	status: bookings.status,
	cancelReason: bookings.cancelReason,
	cancelCause: bookings.cancelCause,
	volatileSolvents: bookings.volatileSolvents,
	checkInAt: bookings.checkInAt,
	checkOutAt: bookings.checkOutAt,
	cancelWindowHours: boxes.cancelWindowHours
};

/**
 * A person's bookings still to come or under way, soonest first. The booking horizon bounds
 * them, so they are read whole.
 */
export async function upcomingBookingsOf(userId: number, now = new Date()) {
	return db
		.select(ownColumns)
		.from(bookings)
		.innerJoin(boxes, eq(boxes.id, bookings.boxId))
		.where(
			and(eq(bookings.userId, userId), gt(bookings.endAt, now), ne(bookings.status, 'cancelled'))
		)
		.orderBy(asc(bookings.startAt), asc(bookings.id));
}

/** The view of a person's past and cancelled bookings: sorted, filtered and paged in SQL. */
export const pastBookingsList = {
	prefix: 'past',
	sorts: ['when', 'box', 'status'],
	defaultSort: 'when',
	defaultDir: 'desc',
	filters: { status: ['completed', 'confirmed', 'no_show', 'cancelled'] },
	perPage: 20
} as const satisfies ListSpec;

/** One page of a person's past and cancelled bookings, with the total. */
export async function pastBookingsOf(
	userId: number,
	query: ListQuery<(typeof pastBookingsList.sorts)[number], 'status'>,
	now = new Date()
) {
	const where = and(
		eq(bookings.userId, userId),
		or(lte(bookings.endAt, now), eq(bookings.status, 'cancelled')),
		query.filters.status ? eq(bookings.status, query.filters.status as BookingStatus) : undefined,
		matchesWords(query.q, [boxes.name, bookings.purpose])
	);
	return pageInSql(
		query,
		async () => {
			const [row] = await db
				.select({ n: count() })
				.from(bookings)
				.innerJoin(boxes, eq(boxes.id, bookings.boxId))
				.where(where);
			return row.n;
		},
		(limit, offset) =>
			db
				.select(ownColumns)
				.from(bookings)
				.innerJoin(boxes, eq(boxes.id, bookings.boxId))
				.where(where)
				.orderBy(
					...orderOf(
						query,
						{ when: bookings.startAt, box: boxes.name, status: bookings.status },
						bookings.id
					)
				)
				.limit(limit)
				.offset(offset)
	);
}

/** A person's bookings an outage cancelled whose time began in the last week. */
export async function recentlyCancelledByOutage(userId: number, now = new Date()) {
	return db
		.select(ownColumns)
		.from(bookings)
		.innerJoin(boxes, eq(boxes.id, bookings.boxId))
		.where(
			and(
				eq(bookings.userId, userId),
				eq(bookings.status, 'cancelled'),
				eq(bookings.cancelCause, 'outage'),
				gt(bookings.startAt, new Date(now.getTime() - 7 * 86_400_000))
			)
		)
		.orderBy(asc(bookings.startAt));
}

export type { CalendarEvent };

export type Viewer = { id: number; role: Role };

/**
 * Bookings (with their purge buffers) and outages overlapping [start, end). The range
 * scan uses (box_id, start_at); the lower bound on start_at keeps it from reading the
 * box's whole history.
 */
export async function events(
	boxIds: number[] | 'all',
	start: Date,
	end: Date,
	viewer: Viewer,
	now = new Date()
): Promise<CalendarEvent[]> {
	const tz = config.facilityTz;
	const manager = hasRole(viewer.role, 'manager');
	const boxFilter = boxIds === 'all' ? undefined : inArray(bookings.boxId, boxIds);
	const outageFilter = boxIds === 'all' ? undefined : inArray(outages.boxId, boxIds);
	const [bookingRows, outageRows] = await Promise.all([
		db
			.select({
				id: bookings.id,
				boxId: bookings.boxId,
				userId: bookings.userId,
				userName: users.name,
				startAt: bookings.startAt,
				endAt: bookings.endAt,
				blockedUntil: bookings.blockedUntil,
				status: bookings.status,
				purpose: bookings.purpose,
				chemicalClasses: bookings.chemicalClasses,
				volatileSolvents: bookings.volatileSolvents,
				checkInAt: bookings.checkInAt,
				checkOutAt: bookings.checkOutAt,
				cancelWindowHours: boxes.cancelWindowHours
			})
			.from(bookings)
			.innerJoin(users, eq(users.id, bookings.userId))
			.innerJoin(boxes, eq(boxes.id, bookings.boxId))
			.where(
				and(
					boxFilter,
					inArray(bookings.status, holdingStatuses),
					lt(bookings.startAt, end),
					gt(bookings.blockedUntil, start),
					startsFrom(start)
				)
			)
			.orderBy(asc(bookings.startAt)),
		db
			.select()
			.from(outages)
			.where(and(outageFilter, lt(outages.startAt, end), gt(outages.endAt, start)))
	]);
	const list: CalendarEvent[] = [];
	for (const b of bookingRows) {
		const mine = b.userId === viewer.id;
		// Still to be worked: pending or confirmed, not ended, not checked out.
		const open = mayCancel(b, now);
		// A no-show holds the box only until it was marked; the rest of its slot is free.
		const noShow = b.status === 'no_show';
		const end = noShow && b.blockedUntil < b.endAt ? b.blockedUntil : b.endAt;
		list.push({
			id: `booking-${b.id}`,
			kind: b.status === 'pending' ? 'pending' : 'booking',
			boxId: b.boxId,
			start: isoInZone(b.startAt, tz),
			end: isoInZone(end > b.startAt ? end : b.endAt, tz),
			title: `${mine ? `You: ${b.purpose}` : b.userName}${noShow ? ' (no-show)' : ''}`,
			mine,
			bookingId: b.id,
			status: b.status,
			booking: {
				userName: b.userName,
				statusText: holderStatus(b, tz),
				purpose: mine || manager ? b.purpose : null,
				chemicalClasses: b.chemicalClasses,
				volatileSolvents: b.volatileSolvents,
				purgeUntil: b.blockedUntil > b.endAt ? isoInZone(b.blockedUntil, tz) : null,
				cancelWindowHours: b.cancelWindowHours,
				canChange: open && (mine || manager),
				movable: open && mine && b.startAt > now
			}
		});
		if (b.blockedUntil > b.endAt) {
			list.push({
				id: `purge-${b.id}`,
				kind: 'purge',
				boxId: b.boxId,
				start: isoInZone(b.endAt, tz),
				end: isoInZone(b.blockedUntil, tz),
				title: 'Purge',
				mine,
				bookingId: b.id
			});
		}
	}
	for (const o of outageRows) {
		list.push({
			id: `outage-${o.id}`,
			kind: 'outage',
			boxId: o.boxId,
			start: isoInZone(o.startAt, tz),
			end: isoInZone(o.endAt, tz),
			title: `Out of service: ${o.reason}`,
			mine: false,
			outageId: o.id,
			reason: o.reason
		});
	}
	return list;
}

/** Bookings waiting for a manager's approval, soonest first. */
export async function pendingBookings() {
	return db
		.select({
			id: bookings.id,
			startAt: bookings.startAt,
			endAt: bookings.endAt,
			purpose: bookings.purpose,
			chemicalClasses: bookings.chemicalClasses,
			volatileSolvents: bookings.volatileSolvents,
			boxName: boxes.name,
			userName: users.name,
			createdAt: bookings.createdAt
		})
		.from(bookings)
		.innerJoin(boxes, eq(boxes.id, bookings.boxId))
		.innerJoin(users, eq(users.id, bookings.userId))
		.where(eq(bookings.status, 'pending'))
		.orderBy(asc(bookings.startAt));
}

/** The bookings waiting for a manager as a COUNT query (read inside the shell's statement). */
export const pendingBookingsQuery = () =>
	db
		.select({ n: sql<number>`count(*)` })
		.from(bookings)
		.where(eq(bookings.status, 'pending'));

/** How many bookings wait for a manager: the shell's badge, on every page, so a count. */
export async function countPendingBookings(): Promise<number> {
	const [row] = await pendingBookingsQuery();
	return Number(row?.n ?? 0);
}
