// Check-in and check-out of a booking, each with the box's readings at that moment.
import { and, asc, eq, gt, gte, isNotNull, isNull, lte, or } from 'drizzle-orm';
import {
	CHECK_IN_OPENS_MIN,
	CHECK_OUT_CLOSES_H,
	CHECK_OUT_PROMPT_MIN,
	checkInRefusal,
	checkOutRefusal,
	checkPrompt
} from '$lib/domain/checkins';
import { hasRole } from '$lib/domain/roles';
import { db } from '../db';
import { bookings, boxes } from '../db/schema';
import type { Actor } from './accounts';
import { latestReadings, withReadings } from './atmosphere';
import { insertReading } from './atmosphere';
import { audit } from './audit';
import { forbidden, notFound, ServiceError } from './errors';

export type CheckInput = { o2Ppm: number; h2oPpm: number; note?: string | null };

async function boxOf(bookingId: number) {
	const [row] = await db
		.select({ boxId: bookings.boxId })
		.from(bookings)
		.where(eq(bookings.id, bookingId));
	if (!row) throw notFound('The booking');
	return row.boxId;
}

/**
 * Records the check-in or check-out and its reading together, under the box's lock (the
 * reading may move the box's atmosphere state).
 */
export async function check(
	actor: Actor,
	bookingId: number,
	which: 'in' | 'out',
	input: CheckInput,
	now = new Date()
) {
	const boxId = await boxOf(bookingId);
	const { value, state } = await withReadings(boxId, actor.id, async (tx, box) => {
		// Under the box's lock (withReadings); the booking is updated below.
		const [booking] = await tx
			.select()
			.from(bookings)
			.where(eq(bookings.id, bookingId))
			.for('update');
		if (!booking) throw notFound('The booking');
		if (booking.userId !== actor.id && !hasRole(actor.role, 'manager'))
			throw forbidden('You can only check in and out of your own bookings.');
		const refusal = which === 'in' ? checkInRefusal(booking, now) : checkOutRefusal(booking, now);
		if (refusal) throw new ServiceError(409, refusal);
		const reading = await insertReading(tx, box, actor.id, {
			...input,
			at: undefined,
			source: which === 'in' ? 'check_in' : 'check_out',
			bookingId
		});
		await tx
			.update(bookings)
			.set(which === 'in' ? { checkInAt: now } : { checkOutAt: now })
			.where(eq(bookings.id, bookingId));
		await audit(tx, {
			actorId: actor.id,
			action: which === 'in' ? 'booking.check_in' : 'booking.check_out',
			entity: 'booking',
			entityId: bookingId,
			details: { readingId: reading.id }
		});
		return reading;
	});
	return { readingId: value.id, at: now, atmosphereState: state };
}

/**
 * This person's bookings that may want a check-in or check-out now, soonest first (at most
 * five): what checkPrompt decides from. A query, so the shell can read it in its statement.
 */
export function checkCandidates(userId: number, now = new Date()) {
	const soon = new Date(
		now.getTime() + Math.max(CHECK_IN_OPENS_MIN, CHECK_OUT_PROMPT_MIN) * 60_000
	);
	return db
		.select({
			id: bookings.id,
			boxName: boxes.name,
			status: bookings.status,
			startAt: bookings.startAt,
			endAt: bookings.endAt,
			checkInAt: bookings.checkInAt,
			checkOutAt: bookings.checkOutAt
		})
		.from(bookings)
		.innerJoin(boxes, eq(boxes.id, bookings.boxId))
		.where(
			and(
				eq(bookings.userId, userId),
				lte(bookings.startAt, soon),
				or(
					and(
						eq(bookings.status, 'confirmed'),
						isNull(bookings.checkInAt),
						gt(bookings.endAt, now)
					),
					and(
						isNotNull(bookings.checkInAt),
						isNull(bookings.checkOutAt),
						gte(bookings.endAt, new Date(now.getTime() - CHECK_OUT_CLOSES_H * 3_600_000))
					)
				)
			)
		)
		.orderBy(asc(bookings.startAt))
		.limit(5);
}

type Candidate = Awaited<ReturnType<typeof checkCandidates>>[number];

/** The first of the candidates (soonest first) that wants a check-in or check-out now. */
export function promptOf(candidates: Candidate[], now = new Date()) {
	for (const b of candidates) {
		const prompt = checkPrompt(b, now);
		if (prompt) return { id: b.id, boxName: b.boxName, startAt: b.startAt, endAt: b.endAt, prompt };
	}
	return null;
}

/** The one booking of this person that wants a check-in or check-out now, if any. */
export async function pendingCheck(userId: number, now = new Date()) {
	return promptOf(await checkCandidates(userId, now), now);
}

/** A booking's check-in page: the booking, what refuses each check now, the box's last reading. */
export async function checkView(actor: Actor, id: number, now = new Date()) {
	const [booking] = await db
		.select({
			id: bookings.id,
			userId: bookings.userId,
			boxId: bookings.boxId,
			boxName: boxes.name,
			status: bookings.status,
			startAt: bookings.startAt,
			endAt: bookings.endAt,
			purpose: bookings.purpose,
			checkInAt: bookings.checkInAt,
			checkOutAt: bookings.checkOutAt
		})
		.from(bookings)
		.innerJoin(boxes, eq(boxes.id, bookings.boxId))
		.where(eq(bookings.id, id));
	// Someone else's booking is not found, as on every page that lists only one's own.
	if (!booking || (booking.userId !== actor.id && !hasRole(actor.role, 'manager')))
		throw notFound('The booking');
	return {
		booking,
		canCheckIn: checkInRefusal(booking, now),
		canCheckOut: checkOutRefusal(booking, now),
		lastReading: (await latestReadings(booking.boxId, 1))[0] ?? null
	};
}
