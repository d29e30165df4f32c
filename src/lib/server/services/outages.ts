import { and, asc, eq, gt, inArray, sql } from 'drizzle-orm';
import type { OutageKind } from '$lib/domain/bookings';
import { db, type Transaction } from '../db';
import type { Database } from '../db/connect';
import { auditLog, bookings, gloveChanges, outages, type Box } from '../db/schema';
import { bookingCancelled } from '../mail/messages';
import { enqueueMany, type Outgoing } from '../mail/outbox';
import type { Actor } from './accounts';
import { audit } from './audit';
import { alternativeFinder } from './alternatives';
import { notFound, ServiceError } from './errors';
import { cancellationKey, mustManage, overlapping, refuseOpenChange } from './outage-reads';
import { transaction } from '../db/transaction';
import { wroteNothing } from '../db/retry';
import { lockBox } from '../db/locks';

// The read side (previews, what an outage cancelled) lives in outage-reads.ts.

export type OutageInput = { start: Date; end: Date; kind: OutageKind; reason: string };

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
	return cancelBookings(tx, actor.id, box, outageId, hit, reason, now);
}

type Hit = Awaited<ReturnType<typeof overlapping>>[number];

/**
 * Cancels the bookings `hit` (read locked, in `tx`, under the box's lock) for the outage and
 * queues their messages in the same transaction, each under its dedupe key.
 */
async function cancelBookings(
	tx: Transaction,
	actorId: number | null,
	box: Box,
	outageId: number,
	hit: Hit[],
	reason: string,
	now: Date
): Promise<number[]> {
	if (!hit.length) return [];
	const ids = hit.map((b) => b.id);
	await tx
		.update(bookings)
		.set({
			status: 'cancelled',
			cancelCause: 'outage',
			cancelReason: reason,
			cancelledAt: now,
			cancelledBy: actorId,
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
	// One transaction first: the outage and every cancellation together, or nothing (a
	// failure midway changes nothing). On a cluster with two writer nodes, that long
	// transaction can keep losing certification to bookings committed meanwhile on the other
	// node; when it was refused every time (so it wrote nothing), the outage is stored on its
	// own in a short transaction, from whose commit on the booking check refuses every slot
	// inside it on any node, and its bookings are cancelled in short steps (issue 16).
	try {
		return await transaction(async (tx) => {
			const box = await lockBox(tx, boxId);
			const { outageId, cancelledBookingIds } = await openOutage(tx, actor, box, input, now);
			const [outage] = await tx.select().from(outages).where(eq(outages.id, outageId));
			return { outage, cancelledBookingIds };
		}, WHOLE_ATTEMPTS);
	} catch (e) {
		if (!wroteNothing(e)) throw e;
	}
	const outageId = await transaction(async (tx) => {
		await lockBox(tx, boxId);
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
		return created.id;
	});
	return finishOutage(outageId, boxId, now);
}

/** Tries of the all-or-nothing outage before it is opened in steps. */
const WHOLE_ATTEMPTS = 4;

/** Bookings cancelled per transaction while an outage is being opened. */
const CANCEL_BATCH = 40;

/**
 * Cancels what a stored outage overlaps, CANCEL_BATCH bookings per short transaction (each
 * takes the box's lock first and reads again what is still open inside the outage, so a
 * booking that slipped in before the outage was stored is caught by the next batch), until
 * none is left. The last transaction, finding none, writes the `outage.created` audit entry
 * once (the box's lock serialises whoever finishes it: the request or the scheduler, see
 * finishOutageCancellations) and answers the outage with every booking it cancelled.
 */
async function finishOutage(outageId: number, boxId: number, now: Date) {
	for (;;) {
		const done = await transaction(async (tx) => {
			const { box, outage } = await lockOutage(tx, outageId, boxId);
			const hit = await overlapping(tx, box.id, outage.startAt, outage.endAt, true);
			if (hit.length) {
				const batch = hit.slice(0, CANCEL_BATCH);
				await cancelBookings(tx, outage.createdBy, box, outage.id, batch, outage.reason, now);
				return null;
			}
			const cancelled = await tx
				.select({ id: bookings.id })
				.from(bookings)
				.where(and(eq(bookings.outageId, outage.id), eq(bookings.cancelCause, 'outage')))
				.orderBy(asc(bookings.startAt), asc(bookings.id));
			const cancelledBookingIds = cancelled.map((b) => b.id);
			if (!(await createdAudited(tx, outage.id))) {
				await audit(tx, {
					actorId: outage.createdBy,
					action: 'outage.created',
					entity: 'outage',
					entityId: outage.id,
					details: {
						boxId: box.id,
						kind: outage.kind,
						start: outage.startAt.toISOString(),
						end: outage.endAt.toISOString(),
						cancelledBookingIds
					}
				});
			}
			return { outage, cancelledBookingIds };
		});
		if (done) return done;
	}
}

/**
 * For the scheduler: finishes outages whose cancelling was cut short (a process killed
 * between batches of createOutage), found as outages stored over five minutes ago, not yet
 * over, without their `outage.created` entry and with open bookings still inside them.
 * Safe from several processes at once: each batch and the entry take the box's lock.
 */
export async function finishOutageCancellations(now = new Date()) {
	const unfinished = await db
		.select({
			id: outages.id,
			boxId: outages.boxId,
			startAt: outages.startAt,
			endAt: outages.endAt
		})
		.from(outages)
		.where(
			and(
				gt(outages.endAt, now),
				sql`${outages.createdAt} < NOW() - INTERVAL 5 MINUTE`,
				sql`${outages.createdAt} > NOW() - INTERVAL 1 DAY`,
				sql`NOT EXISTS (SELECT 1 FROM ${auditLog} WHERE ${auditLog.entity} = 'outage'
					AND ${auditLog.entityId} = CAST(${outages.id} AS CHAR)
					AND ${auditLog.action} = 'outage.created')`
			)
		)
		.limit(20);
	let finished = 0;
	for (const o of unfinished) {
		if (!(await overlapping(db, o.boxId, o.startAt, o.endAt, false)).length) continue;
		await finishOutage(o.id, o.boxId, now);
		finished++;
	}
	return finished;
}

async function createdAudited(q: Database | Transaction, outageId: number) {
	const [entry] = await q
		.select({ id: auditLog.id })
		.from(auditLog)
		.where(
			and(
				eq(auditLog.entity, 'outage'),
				eq(auditLog.entityId, String(outageId)),
				eq(auditLog.action, 'outage.created')
			)
		)
		.limit(1);
	return entry !== undefined;
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
 * The box an outage is on. Read before the transaction that changes the outage (`db`), as
 * the box lock must be its first statement (db/locks.ts); an outage never moves to another
 * box. Inside a transaction that already holds the box's lock, `tx` may read it.
 */
export async function boxOfOutage(outageId: number, q: Database | Transaction = db) {
	const [found] = await q
		.select({ boxId: outages.boxId })
		.from(outages)
		.where(eq(outages.id, outageId));
	if (!found) throw notFound('The outage');
	return found.boxId;
}

/**
 * Locks the outage's box, then reads the outage: the box row first, as every write that
 * changes a box's time or state takes it. `boxId` from boxOfOutage.
 */
export async function lockOutage(tx: Transaction, outageId: number, boxId: number) {
	const box = await lockBox(tx, boxId);
	const [outage] = await tx.select().from(outages).where(eq(outages.id, outageId));
	if (!outage) throw notFound('The outage');
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
	const boxId = await boxOfOutage(outageId);
	return transaction(async (tx) => {
		const { box, outage: current } = await lockOutage(tx, outageId, boxId);
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

/**
 * Ends an outage now: the box is back in service. One that has not begun is withdrawn
 * instead (closeOutage). Cancelled bookings stay cancelled. The answer is the outage as it
 * stood, with `withdrawn` saying which it was.
 */
export async function endOutage(actor: Actor, outageId: number, now = new Date()) {
	mustManage(actor, 'Only a manager can end an outage.');
	const boxId = await boxOfOutage(outageId);
	return transaction(async (tx) => {
		const { outage: before } = await lockOutage(tx, outageId, boxId);
		await refuseOpenChange(tx, outageId);
		const what = await closeOutage(tx, actor, outageId, now);
		if (what === 'withdrawn') return { ...before, withdrawn: true };
		const [outage] = await tx.select().from(outages).where(eq(outages.id, outageId));
		return { ...outage, withdrawn: false };
	});
}

/**
 * Ends an outage inside the caller's transaction (a completed glove change, a finished
 * maintenance task), which holds the box's lock already (taken again here, harmlessly).
 *
 * An outage that has not begun yet is withdrawn: its row is deleted, so the calendar, the
 * feeds and the booking rules stop seeing it at once (ending it "now" would leave an empty
 * span at its start that still refuses bookings across that instant and still looks live).
 * The bookings it cancelled stay cancelled, their holders already told, and lose the link
 * to it (ON DELETE SET NULL), as do a maintenance task's plan and log; what it was and what
 * it cancelled stay in the audit entry. A glove change begins its outage when it starts,
 * so one with a change on it is ended, never withdrawn (its record keeps the change).
 */
export async function closeOutage(
	tx: Transaction,
	actor: Actor,
	outageId: number,
	now: Date
): Promise<'ended' | 'withdrawn'> {
	// The caller holds the box's lock already, so the outage's box is read in `tx`.
	const { outage: current } = await lockOutage(tx, outageId, await boxOfOutage(outageId, tx));
	if (current.endAt <= now) throw new ServiceError(409, 'This outage has already ended.');
	if (current.startAt > now && !(await hasGloveChange(tx, outageId))) {
		await withdrawOutage(tx, actor, current);
		return 'withdrawn';
	}
	// A change's outage starts when the change does; a clock a moment behind still ends it.
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
	return 'ended';
}

async function hasGloveChange(tx: Transaction, outageId: number) {
	const [change] = await tx
		.select({ id: gloveChanges.id })
		.from(gloveChanges)
		.where(eq(gloveChanges.outageId, outageId))
		.limit(1);
	return change !== undefined;
}

async function withdrawOutage(tx: Transaction, actor: Actor, outage: typeof outages.$inferSelect) {
	const cancelled = await tx
		.select({ id: bookings.id })
		.from(bookings)
		.where(eq(bookings.outageId, outage.id));
	await tx.delete(outages).where(eq(outages.id, outage.id));
	await audit(tx, {
		actorId: actor.id,
		action: 'outage.withdrawn',
		entity: 'outage',
		entityId: outage.id,
		details: {
			boxId: outage.boxId,
			kind: outage.kind,
			reason: outage.reason,
			start: outage.startAt.toISOString(),
			end: outage.endAt.toISOString(),
			cancelledBookingIds: cancelled.map((b) => b.id)
		}
	});
}
