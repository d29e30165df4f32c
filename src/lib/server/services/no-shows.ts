// No-shows: a confirmed booking nobody checked in to within the box's grace time after its
// start is marked no-show; the rest of its slot (and its purge buffer) is freed and the
// booker told. Safe to run from several processes: each booking is claimed with
// FOR UPDATE SKIP LOCKED and checked again under the lock.
import { and, eq, gt, isNull, lte, sql } from 'drizzle-orm';
import { noShowDue } from '$lib/domain/usage';
import { db } from '../db';
import { startsFrom } from '../db/queries';
import { bookings, boxes, users } from '../db/schema';
import { bookingNoShow } from '../mail/messages';
import { enqueue } from '../mail/outbox';
import { audit } from './audit';
import { notifyFreedWatches } from './watches';
import { transaction } from '../db/transaction';

export async function markNoShows(now = new Date()): Promise<number[]> {
	const due = await db
		.select({ id: bookings.id })
		.from(bookings)
		.innerJoin(boxes, eq(boxes.id, bookings.boxId))
		.where(
			and(
				eq(bookings.status, 'confirmed'),
				// The (status, start_at) index is read from the earliest start of a booking still
				// running, not from the first booking.
				startsFrom(now),
				isNull(bookings.checkInAt),
				lte(bookings.startAt, sql`${now} - INTERVAL ${boxes.noShowGraceMin} MINUTE`),
				gt(bookings.endAt, now)
			)
		)
		.limit(200);
	const marked: number[] = [];
	for (const { id } of due) {
		// True once it is marked; pushed after the commit, so a retried run counts it once.
		const done = await transaction(async (tx) => {
			// Only the booking row is locked: the box row stays free for bookings meanwhile.
			const [row] = await tx
				.select()
				.from(bookings)
				.where(eq(bookings.id, id))
				.for('update', { skipLocked: true });
			if (!row) return false;
			const [box] = await tx
				.select({ boxName: boxes.name, room: boxes.room, graceMin: boxes.noShowGraceMin })
				.from(boxes)
				.where(eq(boxes.id, row.boxId));
			const b = { ...row, ...box };
			if (!noShowDue(b, b.graceMin, now)) return false;
			await tx
				.update(bookings)
				.set({ status: 'no_show', blockedUntil: now, sequence: sql`${bookings.sequence} + 1` })
				.where(eq(bookings.id, id));
			await audit(tx, {
				actorId: null,
				action: 'booking.no_show',
				entity: 'booking',
				entityId: id,
				details: { graceMin: b.graceMin }
			});
			// The rest of the slot and its purge are free: someone may be watching that time.
			await notifyFreedWatches(tx, b.boxId, { startAt: now, endAt: b.blockedUntil }, now);
			const [person] = await tx
				.select({ id: users.id, email: users.email, name: users.name })
				.from(users)
				.where(eq(users.id, b.userId));
			if (person) {
				const message = bookingNoShow({ ...b, sequence: b.sequence + 1 }, person, b.graceMin);
				await enqueue(tx, person, message, `booking:${id}:no_show`, {
					title: `No-show: ${b.boxName}`,
					body: `Nobody checked in within ${b.graceMin} minutes of the start; the rest of the slot is free again.`,
					link: '/bookings'
				});
			}
			return true;
		});
		if (done) marked.push(id);
	}
	return marked;
}
