// The box's phone page (/boxes/:id/here), opened from the QR label on the box: the box's
// state, who holds it now and next, the newest reading, the glove on each port, and the
// viewer's own booking with what a check-in or check-out would do now.
import { and, asc, eq, gte, inArray, isNull, lte } from 'drizzle-orm';
import {
	CHECK_IN_OPENS_MIN,
	CHECK_OUT_CLOSES_H,
	checkAction,
	checkInRefusal,
	checkOutRefusal
} from '$lib/domain/checkins';
import { handForPosition } from '$lib/domain/boxes';
import { db } from '../db';
import { bookings } from '../db/schema';
import type { Actor } from './accounts';
import { getBox } from './boxes';
import { events } from './calendar';
import { check, type CheckInput } from './checkins';
import { notFound } from './errors';
import { glovesOfBox } from './gloves';

/** How far ahead "next" looks. */
export const NEXT_WITHIN_DAYS = 7;
/** How far ahead one's own booking is shown (with when check-in opens). */
const MINE_WITHIN_H = 24;

const HOUR_MS = 3_600_000;

/** A booking, purge buffer or outage on the box, as the phone page shows it. */
export type HereSlot = {
	kind: 'booking' | 'pending' | 'purge' | 'outage';
	start: Date;
	end: Date;
	/** The booker's name (the calendar shows everyone who holds a box), or the outage's reason. */
	who: string;
	mine: boolean;
	/** "Checked in 09:02", "Waiting for approval"… (bookings only). */
	statusText: string | null;
	/** Only for its holder and managers, as on the calendar. */
	purpose: string | null;
};

/**
 * What the page shows for `viewer` at `now`. Others' bookings come through the calendar's
 * own read (`events`), so the page shows exactly what the calendar would: who and when,
 * the purpose only to its holder and managers.
 */
export async function boxHere(viewer: Actor, boxId: number, now = new Date()) {
	const { summary } = await getBox(boxId);
	const [schedule, mine, gloves] = await Promise.all([
		events([boxId], now, new Date(now.getTime() + NEXT_WITHIN_DAYS * 24 * HOUR_MS), viewer, now),
		myBookingHere(viewer.id, boxId, now),
		glovesOfBox(boxId)
	]);
	const slots: HereSlot[] = schedule.map((e) => ({
		kind: e.kind,
		start: new Date(e.start),
		end: new Date(e.end),
		who: e.kind === 'outage' ? (e.reason ?? e.title) : (e.booking?.userName ?? e.title),
		mine: e.mine,
		statusText: e.booking?.statusText ?? null,
		purpose: e.booking?.purpose ?? null
	}));
	const running = slots.filter((s) => s.start <= now && now < s.end);
	// An outage outranks a booking it has not cancelled yet; a booking outranks its purge.
	const rank = { outage: 0, booking: 1, pending: 2, purge: 3 } as const;
	const current = running.sort((a, b) => rank[a.kind] - rank[b.kind])[0] ?? null;
	const next =
		slots
			.filter((s) => s.start > now && s.kind !== 'purge')
			.sort((a, b) => a.start.getTime() - b.start.getTime())[0] ?? null;
	const stateOf = new Map(summary.ports.map((p) => [p.id, p.gloveState]));
	return {
		box: summary,
		current,
		next,
		nextWithinDays: NEXT_WITHIN_DAYS,
		mine,
		ports: gloves.map((g) => ({
			id: g.port.id,
			position: g.port.position,
			state: stateOf.get(g.port.id) ?? 'none',
			hasGlove: g.glove !== null,
			/** The hand a report defaults to, as on the port's damage page: the port's side. */
			hand: handForPosition(g.port.position)
		}))
	};
}

/**
 * The viewer's booking on this box that a check-in or check-out is for: the first that can
 * be checked in or out now, else the next one within a day (with the reason it cannot be
 * yet), else null. Checked-out bookings are done and left out.
 */
export async function myBookingHere(userId: number, boxId: number, now = new Date()) {
	const rows = await db
		.select({
			id: bookings.id,
			startAt: bookings.startAt,
			endAt: bookings.endAt,
			purpose: bookings.purpose,
			status: bookings.status,
			checkInAt: bookings.checkInAt,
			checkOutAt: bookings.checkOutAt
		})
		.from(bookings)
		.where(
			and(
				eq(bookings.userId, userId),
				eq(bookings.boxId, boxId),
				inArray(bookings.status, ['pending', 'confirmed']),
				isNull(bookings.checkOutAt),
				gte(bookings.endAt, new Date(now.getTime() - CHECK_OUT_CLOSES_H * HOUR_MS)),
				lte(bookings.startAt, new Date(now.getTime() + MINE_WITHIN_H * HOUR_MS))
			)
		)
		.orderBy(asc(bookings.startAt))
		.limit(10);
	const actionable = rows.find((b) => checkAction(b, now) !== null);
	const booking = actionable ?? rows.find((b) => b.endAt > now);
	if (!booking) return null;
	const action = checkAction(booking, now);
	return {
		...booking,
		action,
		refusal: action
			? null
			: booking.checkInAt
				? checkOutRefusal(booking, now)
				: checkInRefusal(booking, now),
		/** When check-in opens, while it has not yet. */
		checkInOpensAt:
			!booking.checkInAt && now.getTime() < booking.startAt.getTime() - CHECK_IN_OPENS_MIN * 60_000
				? new Date(booking.startAt.getTime() - CHECK_IN_OPENS_MIN * 60_000)
				: null
	};
}

/**
 * Checks in or out of one's booking from the box's page: the booking must be on this box
 * (another box's booking is not found here); checkins.ts decides the rest.
 */
export async function checkAtBox(
	actor: Actor,
	boxId: number,
	bookingId: number,
	which: 'in' | 'out',
	input: CheckInput,
	now = new Date()
) {
	const [row] = await db
		.select({ boxId: bookings.boxId })
		.from(bookings)
		.where(eq(bookings.id, bookingId));
	if (!row || row.boxId !== boxId) throw notFound('The booking');
	return check(actor, bookingId, which, input, now);
}
