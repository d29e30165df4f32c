import { and, eq, gt, gte, inArray, lt, sql } from 'drizzle-orm';
import { LONGEST_BOOKING_MS } from '$lib/domain/bookings';
import type { OutageKind } from '$lib/domain/bookings';
import { hasRole } from '$lib/domain/roles';
import type { Transaction } from '../db';
import { bookings, outages, users } from '../db/schema';
import { bookingCancelled } from '../mail/messages';
import { enqueueMany, type Outgoing } from '../mail/outbox';
import type { Actor } from './accounts';
import { audit } from './audit';
import { alternativeFinder } from './alternatives';
import { forbidden, notFound, ServiceError } from './errors';
import { transaction } from '../db/transaction';
import { lockBox } from '../db/locks';

export type OutageInput = { start: Date; end: Date; kind: OutageKind; reason: string };

/**
 * Cancels every pending or confirmed booking on the box that overlaps [start, end), and
 * queues one e-mail and one in-app notice per booking, all in the caller's transaction.
 */
async function cancelOverlapping(
	tx: Transaction,
	actor: Actor,
	box: { id: number; name: string; room: string },
	start: Date,
	end: Date,
	reason: string,
	now: Date
): Promise<number[]> {
	const hit = await tx
		.select({
			id: bookings.id,
			startAt: bookings.startAt,
			endAt: bookings.endAt,
			purpose: bookings.purpose,
			sequence: bookings.sequence,
			userId: users.id,
			email: users.email,
			name: users.name
		})
		.from(bookings)
		.innerJoin(users, eq(users.id, bookings.userId))
		.where(
			and(
				eq(bookings.boxId, box.id),
				inArray(bookings.status, ['pending', 'confirmed']),
				// From a point on (box_id, start_at): only the rows read are locked.
				gte(bookings.startAt, new Date(start.getTime() - LONGEST_BOOKING_MS)),
				lt(bookings.startAt, end),
				gt(bookings.endAt, start)
			)
		)
		.for('update');
	if (!hit.length) return [];
	const ids = hit.map((b) => b.id);
	await tx
		.update(bookings)
		.set({
			status: 'cancelled',
			cancelCause: 'outage',
			cancelReason: reason,
			cancelledAt: now,
			cancelledBy: actor.id,
			sequence: sql`${bookings.sequence} + 1`
		})
		.where(inArray(bookings.id, ids));
	const alternativesFor = await alternativeFinder(tx, [...new Set(hit.map((b) => b.userId))], now);
	const outgoing: Outgoing[] = hit.map((b) => {
		const sequence = b.sequence + 1;
		const lengthMin = Math.round((b.endAt.getTime() - b.startAt.getTime()) / 60_000);
		const alternatives = alternativesFor(b.userId, lengthMin, box.id);
		const message = bookingCancelled(
			{
				id: b.id,
				startAt: b.startAt,
				endAt: b.endAt,
				sequence,
				boxName: box.name,
				room: box.room,
				purpose: b.purpose,
				updatedAt: now
			},
			{ name: b.name },
			reason,
			alternatives.map((a) => ({ start: a.start, end: a.end, boxName: a.boxName }))
		);
		return {
			to: { id: b.userId, email: b.email },
			message,
			dedupeKey: `booking:${b.id}:cancelled:${sequence}`,
			inApp: { title: message.subject, body: `Reason: ${reason}`, link: '/bookings' }
		};
	});
	await enqueueMany(tx, outgoing);
	return ids;
}

/** Takes a box out of service; every overlapping booking is cancelled and its holder told. */
export async function createOutage(
	actor: Actor,
	boxId: number,
	input: OutageInput,
	now = new Date()
) {
	if (!hasRole(actor.role, 'manager'))
		throw forbidden('Only a manager can take a box out of service.');
	if (input.end <= input.start) {
		throw new ServiceError(400, 'The expected end must be after the start.', {
			fields: { end: 'The expected end must be after the start.' }
		});
	}
	return transaction(async (tx) => {
		const { outageId, cancelledBookingIds } = await openOutage(tx, actor, boxId, input, now);
		const [outage] = await tx.select().from(outages).where(eq(outages.id, outageId));
		return { outage, cancelledBookingIds };
	});
}

/** The body of createOutage, for callers that open an outage inside their own transaction. */
export async function openOutage(
	tx: Transaction,
	actor: Actor,
	boxId: number,
	input: OutageInput,
	now: Date
) {
	const box = await lockBox(tx, boxId);
	const [created] = await tx
		.insert(outages)
		.values({
			boxId,
			startAt: input.start,
			endAt: input.end,
			kind: input.kind,
			reason: input.reason,
			createdBy: actor.id
		})
		.$returningId();
	// Bookings ending after the outage starts and starting before it ends; a booking's
	// purge buffer alone does not make it overlap.
	const cancelledBookingIds = await cancelOverlapping(
		tx,
		actor,
		box,
		input.start,
		input.end,
		input.reason,
		now
	);
	await audit(tx, {
		actorId: actor.id,
		action: 'outage.created',
		entity: 'outage',
		entityId: created.id,
		details: {
			boxId,
			kind: input.kind,
			start: input.start.toISOString(),
			end: input.end.toISOString(),
			cancelledBookingIds
		}
	});
	return { outageId: created.id, cancelledBookingIds };
}

/** Moves the expected end. A later end cancels what the longer outage now overlaps. */
export async function extendOutage(actor: Actor, outageId: number, end: Date, now = new Date()) {
	if (!hasRole(actor.role, 'manager')) throw forbidden('Only a manager can change an outage.');
	return transaction(async (tx) => {
		const [current] = await tx.select().from(outages).where(eq(outages.id, outageId)).for('update');
		if (!current) throw notFound('The outage');
		if (end <= current.startAt) {
			throw new ServiceError(400, 'The expected end must be after the start.', {
				fields: { end: 'The expected end must be after the start.' }
			});
		}
		const box = await lockBox(tx, current.boxId);
		await tx
			.update(outages)
			.set({ endAt: end, sequence: sql`${outages.sequence} + 1` })
			.where(eq(outages.id, outageId));
		const cancelledBookingIds =
			end > current.endAt
				? await cancelOverlapping(tx, actor, box, current.endAt, end, current.reason, now)
				: [];
		await audit(tx, {
			actorId: actor.id,
			action: 'outage.changed',
			entity: 'outage',
			entityId: outageId,
			details: { from: current.endAt.toISOString(), to: end.toISOString(), cancelledBookingIds }
		});
		const [outage] = await tx.select().from(outages).where(eq(outages.id, outageId));
		return { outage, cancelledBookingIds };
	});
}

/** Ends an outage now: the box is back in service. Cancelled bookings stay cancelled. */
export async function endOutage(actor: Actor, outageId: number, now = new Date()) {
	if (!hasRole(actor.role, 'manager')) throw forbidden('Only a manager can end an outage.');
	await transaction((tx) => closeOutage(tx, actor, outageId, now));
}

/** Ends an outage inside the caller's transaction (a completed glove change does this). */
export async function closeOutage(tx: Transaction, actor: Actor, outageId: number, now: Date) {
	const [current] = await tx.select().from(outages).where(eq(outages.id, outageId)).for('update');
	if (!current) throw notFound('The outage');
	if (current.endAt <= now) throw new ServiceError(409, 'This outage has already ended.');
	const endAt = current.startAt > now ? current.startAt : now;
	await tx
		.update(outages)
		.set({ endAt, sequence: sql`${outages.sequence} + 1` })
		.where(eq(outages.id, outageId));
	await audit(tx, {
		actorId: actor.id,
		action: 'outage.ended',
		entity: 'outage',
		entityId: outageId,
		details: { endAt: endAt.toISOString() }
	});
}
