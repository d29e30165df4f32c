// Deactivating a person (status 'suspended') and bringing them back. Deactivation is one
// transaction: the status, the end of every session, their open links, and the cancellation
// of their bookings still to come with the usual notice, so a half-deactivated person who
// still holds box time never exists.
import { and, asc, eq, gt, inArray, sql } from 'drizzle-orm';
import { openStatuses } from '$lib/domain/bookings';
import { db, type Transaction } from '../db';
import type { Database } from '../db/connect';
import { lockBox } from '../db/locks';
import { bookings, boxes, sessions, users } from '../db/schema';
import { transaction } from '../db/transaction';
import { bookingCancelled } from '../mail/messages';
import { enqueueMany, type Outgoing } from '../mail/outbox';
import type { Actor } from './accounts';
import { revokeLinks } from './account-tokens';
import { audit } from './audit';
import { forbidden, notFound, ServiceError } from './errors';
import { notifyFreedWatches } from './watches';

export const DEACTIVATION_REASON = 'Account deactivated';

function mustAdmin(actor: Actor) {
	if (actor.role !== 'admin') throw forbidden('Only an admin can deactivate or reactivate people.');
}

/** The person's row under its lock; both callers update it, so on a cluster it certifies. */
async function lockPerson(tx: Transaction, userId: number) {
	const [person] = await tx
		.select({ id: users.id, name: users.name, email: users.email, status: users.status })
		.from(users)
		.where(eq(users.id, userId))
		.for('update');
	if (!person) throw notFound('The person');
	return person;
}

/** Pending and confirmed bookings of the person that start after `now`, with their boxes. */
function futureBookings(q: Database | Transaction, userId: number, now: Date) {
	return q
		.select({
			id: bookings.id,
			boxId: bookings.boxId,
			startAt: bookings.startAt,
			endAt: bookings.endAt,
			blockedUntil: bookings.blockedUntil,
			purpose: bookings.purpose,
			sequence: bookings.sequence,
			boxName: boxes.name,
			room: boxes.room
		})
		.from(bookings)
		.innerJoin(boxes, eq(boxes.id, bookings.boxId))
		.where(
			and(
				eq(bookings.userId, userId),
				inArray(bookings.status, openStatuses),
				gt(bookings.startAt, now)
			)
		)
		.orderBy(asc(bookings.startAt));
}

/** The refusals of deactivation, checked before asking and again inside the transaction. */
function refuse(actor: Actor, person: { id: number; status: string }) {
	if (actor.id === person.id)
		throw new ServiceError(409, 'You cannot deactivate your own account; ask another admin.');
	if (person.status === 'suspended')
		throw new ServiceError(409, 'This account is already deactivated.');
	if (person.status === 'pending')
		throw new ServiceError(409, 'This registration is still waiting; decline it on Approvals.');
}

/** What deactivating would do, for the confirmation step; changes nothing. */
export async function deactivationPreview(actor: Actor, userId: number, now = new Date()) {
	mustAdmin(actor);
	const [person] = await db
		.select({ id: users.id, name: users.name, status: users.status })
		.from(users)
		.where(eq(users.id, userId));
	if (!person) throw notFound('The person');
	refuse(actor, person);
	const held = await futureBookings(db, userId, now);
	return { name: person.name, bookings: held };
}

/**
 * Deactivates a person: they can no longer sign in or read their feed, every session ends
 * at once, open reset or invitation links stop working, and their bookings that have not
 * started are cancelled (cause 'manager', SEQUENCE raised) with a cancellation e-mail and
 * notice each. A booking under way is left to finish and be billed as usual. An admin
 * cannot deactivate themself, so a site always keeps one admin who can sign in.
 */
export async function deactivateUser(actor: Actor, userId: number, now = new Date()) {
	mustAdmin(actor);
	// Which boxes to lock is read before the transaction: the locks must be its first
	// statements (db/locks.ts), so its later reads see what was committed meanwhile.
	const seen = await futureBookings(db, userId, now);
	const boxIds = [...new Set(seen.map((b) => b.boxId))].sort((a, b) => a - b);
	return transaction(async (tx) => {
		// The box rows first, in one order, as every write that frees box time does; then the
		// person, then their bookings again, now locked.
		for (const boxId of boxIds) await lockBox(tx, boxId);
		const person = await lockPerson(tx, userId);
		refuse(actor, person);
		const held = await futureBookings(tx, userId, now).for('update');

		await tx.update(users).set({ status: 'suspended' }).where(eq(users.id, userId));
		const [ended] = await tx.delete(sessions).where(eq(sessions.userId, userId));
		await revokeLinks(tx, userId, now);

		const ids = held.map((b) => b.id);
		if (ids.length) {
			await tx
				.update(bookings)
				.set({
					status: 'cancelled',
					cancelCause: 'manager',
					cancelReason: DEACTIVATION_REASON,
					cancelledAt: now,
					cancelledBy: actor.id,
					sequence: sql`${bookings.sequence} + 1`
				})
				.where(inArray(bookings.id, ids));
			const outgoing: Outgoing[] = held.map((b) => {
				const sequence = b.sequence + 1;
				// No alternatives and no rebooking link: the person can no longer book.
				const message = bookingCancelled(
					{ ...b, sequence, updatedAt: now },
					person,
					DEACTIVATION_REASON,
					[],
					{ rebook: false }
				);
				return {
					to: person,
					message,
					dedupeKey: `booking:${b.id}:cancelled:${sequence}`,
					inApp: { title: message.subject, body: `Reason: ${DEACTIVATION_REASON}` }
				};
			});
			await enqueueMany(tx, outgoing);
			for (const b of held) {
				await audit(tx, {
					actorId: actor.id,
					action: 'booking.cancelled',
					entity: 'booking',
					entityId: b.id,
					details: { cause: 'manager', reason: DEACTIVATION_REASON }
				});
				// The freed time may be what someone is waiting for.
				await notifyFreedWatches(tx, b.boxId, { startAt: b.startAt, endAt: b.blockedUntil }, now);
			}
		}
		await audit(tx, {
			actorId: actor.id,
			action: 'user.deactivated',
			entity: 'user',
			entityId: userId,
			details: {
				from: person.status,
				sessionsEnded: ended.affectedRows,
				cancelledBookingIds: ids
			}
		});
		return { cancelledBookingIds: ids, sessionsEnded: ended.affectedRows };
	});
}

/** Lets a deactivated person sign in again; cancelled bookings stay cancelled. */
export async function reactivateUser(actor: Actor, userId: number) {
	mustAdmin(actor);
	await transaction(async (tx) => {
		const person = await lockPerson(tx, userId);
		if (person.status !== 'suspended')
			throw new ServiceError(409, 'Only a deactivated account can be reactivated.');
		await tx.update(users).set({ status: 'active' }).where(eq(users.id, userId));
		await audit(tx, {
			actorId: actor.id,
			action: 'user.reactivated',
			entity: 'user',
			entityId: userId
		});
	});
}
