// The write side of bookings: making one or a weekly series, moving or editing it, cancelling
// and approving, each under the box row lock; the check itself is booking-check.ts.
import { eq, sql } from 'drizzle-orm';
import { missingTimeReason, refusalStatus } from '$lib/domain/booking-rules';
import { weeklySlots } from '$lib/domain/bookings';
import { hasRole } from '$lib/domain/roles';
import { isoInZone } from '$lib/domain/time';
import type { BookingChange, BookingInput } from '$lib/validation/bookings';
import { config } from '../config';
import { db } from '../db';
import { lockBox } from '../db/locks';
import { bookings, boxes, users, type Booking } from '../db/schema';
import { transaction } from '../db/transaction';
import type { Actor } from './accounts';
import { audit } from './audit';
import {
	boxOf,
	evaluate,
	mustBeOpen,
	queueConfirmation,
	readGates,
	reasonsForClient,
	refusal,
	type SeriesRefusal
} from './booking-check';
import { book } from './booking-decision';
import { attempt, forbidden, notFound, ServiceError } from './errors';
import { notifyFreedWatches } from './watches';

/**
 * Books a free time offered after an outage cancelled `fromBookingId`: the same purpose,
 * chemicals and billing group as the booking it replaces, through the same rules as any.
 */
export async function rebook(
	actor: Actor,
	fromBookingId: number,
	slot: { boxId: number; start: Date; end: Date },
	now = new Date()
) {
	const original = await getBooking(actor, fromBookingId);
	if (original.userId !== actor.id) throw notFound('The booking');
	return createBooking(
		actor,
		{
			...slot,
			purpose: original.purpose,
			chemicalClasses: original.chemicalClasses,
			volatileSolvents: original.volatileSolvents,
			groupId: original.groupId ?? undefined
		},
		now
	);
}

/** One booking, for its holder or a manager. */
export async function getBooking(actor: Actor, id: number) {
	const [booking] = await db.select().from(bookings).where(eq(bookings.id, id));
	if (!booking) throw notFound('The booking');
	if (booking.userId !== actor.id && !hasRole(actor.role, 'manager'))
		throw forbidden('You can only see your own bookings.');
	return booking;
}

/**
 * Creates a booking: the booking decision (booking-decision.ts), where the box row is locked
 * (a certified write, db/locks.ts) before anything that overlaps is read, so two requests
 * for the same slot are serialised by MariaDB, or refused at certification on a Galera
 * cluster and run again, and never both succeed.
 */
export function createBooking(actor: Actor, input: BookingInput, now = new Date()) {
	return book(actor, input, now);
}

/**
 * A weekly series: the slot on each of `weeks` weeks on the facility's wall clock (the first
 * included), each checked and made on its own, in its own transaction, as any booking. All
 * made share the first made one's id as `seriesId`. A 422 when none could be made.
 */
export async function createSeries(
	actor: Actor,
	input: BookingInput,
	weeks: number,
	now = new Date()
) {
	const tz = config.facilityTz;
	const created: Awaited<ReturnType<typeof book>>[] = [];
	const refused: SeriesRefusal[] = [];
	for (const slot of weeklySlots(input.start, input.end, weeks, tz)) {
		const when = { start: isoInZone(slot.start, tz), end: isoInZone(slot.end, tz) };
		if (slot.missing) {
			refused.push({ ...when, reasons: reasonsForClient([missingTimeReason(slot, tz)]) });
			continue;
		}
		const one = { ...input, start: slot.start, end: slot.end };
		const made = await attempt(() => book(actor, one, now, created[0]?.id ?? 'first'));
		if (made.ok) created.push(made.value);
		else if (made.error.status === 409 || made.error.status === 422) {
			const details = made.error.details as { reasons: SeriesRefusal['reasons'] };
			refused.push({ ...when, reasons: details.reasons });
		} else throw made.error;
	}
	if (!created.length) {
		throw new ServiceError(422, 'None of the weeks could be booked.', {
			reasons: refused[0]?.reasons ?? [],
			refused
		});
	}
	return { created, refused };
}

/** Owner or manager cancels a pending or confirmed booking that has not ended. */
export async function cancelBooking(
	actor: Actor,
	id: number,
	reason: string | undefined,
	now = new Date()
) {
	const boxId = await boxOf(id);
	return transaction(async (tx) => {
		// The box row first, as every change to a box's time takes it, then the booking.
		await lockBox(tx, boxId);
		const [booking] = await tx.select().from(bookings).where(eq(bookings.id, id)).for('update');
		if (!booking) throw notFound('The booking');
		const isOwner = booking.userId === actor.id;
		if (!isOwner && !hasRole(actor.role, 'manager'))
			throw forbidden('You can only cancel your own bookings.');
		mustBeOpen(booking, now, 'cancelled');
		const cause = isOwner ? 'user' : 'manager';
		await tx
			.update(bookings)
			.set({
				status: 'cancelled',
				cancelCause: cause,
				cancelReason: reason || (isOwner ? 'Cancelled by the booker.' : 'Cancelled by a manager.'),
				cancelledAt: now,
				cancelledBy: actor.id,
				sequence: sql`${bookings.sequence} + 1`
			})
			.where(eq(bookings.id, id));
		await audit(tx, {
			actorId: actor.id,
			action: 'booking.cancelled',
			entity: 'booking',
			entityId: id,
			details: { cause, reason }
		});
		await notifyFreedWatches(
			tx,
			boxId,
			{ startAt: booking.startAt, endAt: booking.blockedUntil },
			now
		);
		const [row] = await tx.select().from(bookings).where(eq(bookings.id, id));
		return row;
	});
}

/** Managers confirm or decline bookings on boxes that need approval. */
export async function decideBooking(
	actor: Actor,
	id: number,
	decision: 'approve' | 'decline',
	reason?: string,
	now = new Date()
) {
	if (!hasRole(actor.role, 'manager')) throw forbidden('Only a manager can approve bookings.');
	const boxId = await boxOf(id);
	return transaction(async (tx) => {
		await lockBox(tx, boxId);
		const [booking] = await tx.select().from(bookings).where(eq(bookings.id, id)).for('update');
		if (!booking) throw notFound('The booking');
		if (booking.status !== 'pending')
			throw new ServiceError(409, 'This booking is no longer waiting for approval.');
		if (decision === 'approve') {
			await tx
				.update(bookings)
				.set({
					status: 'confirmed',
					confirmedAt: now,
					decidedBy: actor.id,
					decidedAt: now,
					sequence: sql`${bookings.sequence} + 1`
				})
				.where(eq(bookings.id, id));
			const [person] = await tx
				.select({
					id: users.id,
					email: users.email,
					name: users.name,
					emailConfirmations: users.emailConfirmations
				})
				.from(users)
				.where(eq(users.id, booking.userId));
			const [box] = await tx
				.select({ name: boxes.name, room: boxes.room })
				.from(boxes)
				.where(eq(boxes.id, booking.boxId));
			if (person?.emailConfirmations && box) {
				await queueConfirmation(tx, person, { ...booking, sequence: booking.sequence + 1 }, box);
			}
		} else {
			await tx
				.update(bookings)
				.set({
					status: 'cancelled',
					cancelCause: 'manager',
					cancelReason: reason ?? 'Declined.',
					cancelledAt: now,
					cancelledBy: actor.id,
					decidedBy: actor.id,
					decidedAt: now,
					sequence: sql`${bookings.sequence} + 1`
				})
				.where(eq(bookings.id, id));
			await notifyFreedWatches(
				tx,
				booking.boxId,
				{ startAt: booking.startAt, endAt: booking.blockedUntil },
				now
			);
		}
		await audit(tx, {
			actorId: actor.id,
			action: decision === 'approve' ? 'booking.approved' : 'booking.declined',
			entity: 'booking',
			entityId: id,
			details: reason ? { reason } : undefined
		});
	});
}

/**
 * Moves a booking (new start and/or end) or changes its purpose, for its holder or a manager,
 * through the same rules as a new booking, with the booking itself left out of what it may
 * collide with. Under the box lock; a refusal changes nothing. A change raises the iCalendar
 * SEQUENCE and sends the holder the updated invitation (if they take confirmations). A move
 * by the holder on a box that needs approval waits for approval again.
 */
export async function changeBooking(
	actor: Actor,
	id: number,
	change: BookingChange,
	now = new Date()
): Promise<Booking> {
	const [found] = await db
		.select({ boxId: bookings.boxId, userId: bookings.userId })
		.from(bookings)
		.where(eq(bookings.id, id));
	if (!found) throw notFound('The booking');
	const manager = hasRole(actor.role, 'manager');
	if (found.userId !== actor.id && !manager)
		throw forbidden('You can only change your own bookings.');
	// The holder's training and quota decide, whoever moves it.
	const gates = await readGates(found.userId, found.boxId);
	return transaction(async (tx) => {
		const box = await lockBox(tx, found.boxId);
		const [b] = await tx.select().from(bookings).where(eq(bookings.id, id)).for('update');
		if (!b) throw notFound('The booking');
		mustBeOpen(b, now, 'changed');
		const start = change.start ?? b.startAt;
		const end = change.end ?? b.endAt;
		if (end <= start) {
			const message = 'The end must be after the start.';
			throw new ServiceError(400, message, { fields: { end: message } });
		}
		const moved = start.getTime() !== b.startAt.getTime() || end.getTime() !== b.endAt.getTime();
		const purpose = change.purpose ?? b.purpose;
		if (!moved && purpose === b.purpose) return b;
		let { blockedUntil, status, confirmedAt } = b;
		if (moved) {
			const slot = {
				boxId: b.boxId,
				start,
				end,
				volatileSolvents: b.volatileSolvents,
				chemicalClasses: b.chemicalClasses
			};
			const { result } = await evaluate(tx, b.userId, slot, now, gates, {
				id: b.id,
				start: b.startAt
			});
			const refused = refusalStatus(result);
			if (refused) throw refusal(result.reasons, refused);
			blockedUntil = result.blockedUntil;
			if (box.needsApproval && !manager && status === 'confirmed') {
				status = 'pending';
				confirmedAt = null;
			}
		}
		const sequence = b.sequence + 1;
		await tx
			.update(bookings)
			.set({ startAt: start, endAt: end, blockedUntil, purpose, status, confirmedAt, sequence })
			.where(eq(bookings.id, id));
		await audit(tx, {
			actorId: actor.id,
			action: moved ? 'booking.moved' : 'booking.changed',
			entity: 'booking',
			entityId: id,
			details: {
				from: { start: b.startAt.toISOString(), end: b.endAt.toISOString(), purpose: b.purpose },
				to: { start: start.toISOString(), end: end.toISOString(), purpose },
				status
			}
		});
		// The time it held and no longer does may be what someone is waiting for.
		if (moved)
			await notifyFreedWatches(tx, b.boxId, { startAt: b.startAt, endAt: b.blockedUntil }, now);
		if (status === 'confirmed' && gates.person?.email_confirmations) {
			await queueConfirmation(
				tx,
				{ id: b.userId, email: gates.person.email, name: gates.person.name },
				{ id, startAt: start, endAt: end, purpose, sequence },
				box,
				true
			);
		}
		const [row] = await tx.select().from(bookings).where(eq(bookings.id, id));
		return row;
	});
}
