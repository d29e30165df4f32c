import { and, asc, eq, gt, inArray, lt, sql } from 'drizzle-orm';
import { holdOverlaps } from '$lib/domain/booking-rules';
import { openStatuses, type OutageKind } from '$lib/domain/bookings';
import { hasRole } from '$lib/domain/roles';
import { db, type Transaction } from '../db';
import type { Database } from '../db/connect';
import { startsFrom } from '../db/queries';
import { bookings, boxes, gloveChanges, outages, outbox, users, type Box } from '../db/schema';
import { bookingCancelled } from '../mail/messages';
import { enqueueMany, type Outgoing } from '../mail/outbox';
import type { Actor } from './accounts';
import { audit } from './audit';
import { alternativeFinder } from './alternatives';
import { forbidden, notFound, ServiceError } from './errors';
import { transaction } from '../db/transaction';
import { lockBox } from '../db/locks';

export type OutageInput = { start: Date; end: Date; kind: OutageKind; reason: string };

function mustManage(actor: Actor, message = 'Only a manager can take a box out of service.') {
	if (!hasRole(actor.role, 'manager')) throw forbidden(message);
}

/**
 * The open bookings on the box whose hold [start_at, blocked_until) overlaps [start, end):
 * holdOverlaps of $lib/domain/booking-rules, the rule that also refuses a new booking, so an
 * outage starting in a purge buffer cancels its booking. The SQL selects by that span, the
 * predicate decides. With `lock`, the rows read are locked for the caller's transaction.
 */
async function overlapping(
	q: Database | Transaction,
	boxId: number,
	start: Date,
	end: Date,
	lock: boolean
) {
	const query = q
		.select({
			id: bookings.id,
			startAt: bookings.startAt,
			endAt: bookings.endAt,
			blockedUntil: bookings.blockedUntil,
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
				eq(bookings.boxId, boxId),
				inArray(bookings.status, openStatuses),
				// From a point on (box_id, start_at): only the rows read are locked.
				startsFrom(start),
				lt(bookings.startAt, end),
				gt(bookings.blockedUntil, start)
			)
		)
		.orderBy(asc(bookings.startAt));
	const rows = await (lock ? query.for('update') : query);
	return rows.filter((b) => holdOverlaps(b, { startAt: start, endAt: end }));
}

/** What an outage over [start, end) would cancel, by person and time; changes nothing. */
export async function previewOutage(
	actor: Actor,
	boxId: number,
	window: { start: Date; end: Date }
) {
	mustManage(actor);
	const [box] = await db.select({ id: boxes.id }).from(boxes).where(eq(boxes.id, boxId));
	if (!box) throw notFound('The box');
	const rows = await overlapping(db, boxId, window.start, window.end, false);
	return rows.map((b) => ({ id: b.id, userName: b.name, start: b.startAt, end: b.endAt }));
}

/**
 * Cancels every pending or confirmed booking on the (locked) box that overlaps [start,
 * end), names the outage on each, and queues one e-mail and one in-app notice per booking,
 * all in the caller's transaction.
 */
async function cancelOverlapping(
	tx: Transaction,
	actor: Actor,
	box: Box,
	outageId: number,
	window: { start: Date; end: Date },
	reason: string,
	now: Date
): Promise<number[]> {
	if (window.end <= window.start) return [];
	const hit = await overlapping(tx, box.id, window.start, window.end, true);
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
			outageId,
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
			dedupeKey: cancellationKey(b.id, sequence),
			inApp: { title: message.subject, body: `Reason: ${reason}`, link: '/bookings' }
		};
	});
	await enqueueMany(tx, outgoing);
	return ids;
}

const cancellationKey = (bookingId: number, sequence: number) =>
	`booking:${bookingId}:cancelled:${sequence}`;

/** Takes a box out of service; every overlapping booking is cancelled and its holder told. */
export async function createOutage(
	actor: Actor,
	boxId: number,
	input: OutageInput,
	now = new Date()
) {
	mustManage(actor);
	if (input.end <= input.start) {
		throw new ServiceError(400, 'The expected end must be after the start.', {
			fields: { end: 'The expected end must be after the start.' }
		});
	}
	return transaction(async (tx) => {
		const box = await lockBox(tx, boxId);
		const { outageId, cancelledBookingIds } = await openOutage(tx, actor, box, input, now);
		const [outage] = await tx.select().from(outages).where(eq(outages.id, outageId));
		return { outage, cancelledBookingIds };
	});
}

/**
 * The body of createOutage, for callers that open an outage inside their own transaction.
 * The caller holds the box's lock (`lockBox`), taken before anything else.
 */
export async function openOutage(
	tx: Transaction,
	actor: Actor,
	box: Box,
	input: OutageInput,
	now: Date
) {
	const [created] = await tx
		.insert(outages)
		.values({
			boxId: box.id,
			startAt: input.start,
			endAt: input.end,
			kind: input.kind,
			reason: input.reason,
			createdBy: actor.id
		})
		.$returningId();
	const cancelledBookingIds = await cancelOverlapping(
		tx,
		actor,
		box,
		created.id,
		input,
		input.reason,
		now
	);
	await audit(tx, {
		actorId: actor.id,
		action: 'outage.created',
		entity: 'outage',
		entityId: created.id,
		details: {
			boxId: box.id,
			kind: input.kind,
			start: input.start.toISOString(),
			end: input.end.toISOString(),
			cancelledBookingIds
		}
	});
	return { outageId: created.id, cancelledBookingIds };
}

/**
 * Locks the outage's box, then reads the outage: the box row first, as every write that
 * changes a box's time or state takes it.
 */
export async function lockOutage(tx: Transaction, outageId: number) {
	const [found] = await tx
		.select({ boxId: outages.boxId })
		.from(outages)
		.where(eq(outages.id, outageId));
	if (!found) throw notFound('The outage');
	const box = await lockBox(tx, found.boxId);
	const [outage] = await tx.select().from(outages).where(eq(outages.id, outageId));
	return { box, outage };
}

/**
 * Moves an outage's times (the caller holds the box lock). Whatever the new times cover
 * that the old ones did not is cancelled; bookings already cancelled stay cancelled.
 */
export async function moveOutage(
	tx: Transaction,
	actor: Actor,
	box: Box,
	current: typeof outages.$inferSelect,
	to: { start: Date; end: Date },
	now: Date
) {
	if (to.end <= to.start) {
		throw new ServiceError(400, 'The expected end must be after the start.', {
			fields: { end: 'The expected end must be after the start.' }
		});
	}
	await tx
		.update(outages)
		.set({ startAt: to.start, endAt: to.end, sequence: sql`${outages.sequence} + 1` })
		.where(eq(outages.id, current.id));
	const reason = current.reason;
	const cancelledBookingIds = [
		...(to.start < current.startAt
			? await cancelOverlapping(
					tx,
					actor,
					box,
					current.id,
					{ start: to.start, end: current.startAt < to.end ? current.startAt : to.end },
					reason,
					now
				)
			: []),
		...(to.end > current.endAt
			? await cancelOverlapping(
					tx,
					actor,
					box,
					current.id,
					{ start: current.endAt > to.start ? current.endAt : to.start, end: to.end },
					reason,
					now
				)
			: [])
	];
	await audit(tx, {
		actorId: actor.id,
		action: 'outage.changed',
		entity: 'outage',
		entityId: current.id,
		details: {
			from: { start: current.startAt.toISOString(), end: current.endAt.toISOString() },
			to: { start: to.start.toISOString(), end: to.end.toISOString() },
			cancelledBookingIds
		}
	});
	return cancelledBookingIds;
}

/** Moves the expected end. A later end cancels what the longer outage now overlaps. */
export async function extendOutage(actor: Actor, outageId: number, end: Date, now = new Date()) {
	mustManage(actor, 'Only a manager can change an outage.');
	return transaction(async (tx) => {
		const { box, outage: current } = await lockOutage(tx, outageId);
		if (end <= current.startAt) {
			throw new ServiceError(400, 'The expected end must be after the start.', {
				fields: { end: 'The expected end must be after the start.' }
			});
		}
		const cancelledBookingIds = await moveOutage(
			tx,
			actor,
			box,
			current,
			{ start: current.startAt, end },
			now
		);
		const [outage] = await tx.select().from(outages).where(eq(outages.id, outageId));
		return { outage, cancelledBookingIds };
	});
}

/** Ends an outage now: the box is back in service. Cancelled bookings stay cancelled. */
export async function endOutage(actor: Actor, outageId: number, now = new Date()) {
	mustManage(actor, 'Only a manager can end an outage.');
	return transaction(async (tx) => {
		await lockOutage(tx, outageId);
		const [open] = await tx
			.select({ id: gloveChanges.id })
			.from(gloveChanges)
			.where(and(eq(gloveChanges.outageId, outageId), eq(gloveChanges.status, 'open')));
		if (open)
			throw new ServiceError(
				409,
				'A glove change on this outage is still open: complete or abandon it first.',
				{ changeId: open.id }
			);
		await closeOutage(tx, actor, outageId, now);
		const [outage] = await tx.select().from(outages).where(eq(outages.id, outageId));
		return outage;
	});
}

/**
 * Ends an outage inside the caller's transaction (a completed glove change, a finished
 * maintenance task): it locks the box first (a no-op when the caller already holds it).
 */
export async function closeOutage(tx: Transaction, actor: Actor, outageId: number, now: Date) {
	const { outage: current } = await lockOutage(tx, outageId);
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

/** The bookings an outage cancelled, by person and time, with their e-mail's delivery. */
export async function cancelledBy(outageId: number) {
	const rows = await db
		.select({
			id: bookings.id,
			startAt: bookings.startAt,
			endAt: bookings.endAt,
			sequence: bookings.sequence,
			userName: users.name,
			email: users.email
		})
		.from(bookings)
		.innerJoin(users, eq(users.id, bookings.userId))
		.where(eq(bookings.outageId, outageId))
		.orderBy(asc(bookings.startAt));
	const keys = rows.map((b) => cancellationKey(b.id, b.sequence));
	const messages = keys.length
		? await db
				.select({ key: outbox.dedupeKey, status: outbox.status, sentAt: outbox.sentAt })
				.from(outbox)
				.where(inArray(outbox.dedupeKey, keys))
		: [];
	return rows.map((b) => {
		const message = messages.find((m) => m.key === cancellationKey(b.id, b.sequence));
		return {
			id: b.id,
			startAt: b.startAt,
			endAt: b.endAt,
			userName: b.userName,
			email: b.email,
			delivery: message?.status ?? null,
			sentAt: message?.sentAt ?? null
		};
	});
}

/** An outage with its box, the glove changes on it and the bookings it cancelled. */
export async function outageDetail(outageId: number) {
	const [row] = await db
		.select({ outage: outages, boxName: boxes.name, gas: boxes.gas })
		.from(outages)
		.innerJoin(boxes, eq(boxes.id, outages.boxId))
		.where(eq(outages.id, outageId));
	if (!row) throw notFound('The outage');
	const changes = await db
		.select({ id: gloveChanges.id, status: gloveChanges.status, portId: gloveChanges.portId })
		.from(gloveChanges)
		.where(eq(gloveChanges.outageId, outageId));
	return { ...row, changes, cancelled: await cancelledBy(outageId) };
}
