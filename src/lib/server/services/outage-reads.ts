// The read side of outages: what an outage would cancel before it is made, moved or ended,
// and what one did cancel. Nothing here writes; services/outages.ts does.
import { and, asc, eq, gt, inArray, lt } from 'drizzle-orm';
import { holdOverlaps } from '$lib/domain/booking-rules';
import { openStatuses } from '$lib/domain/bookings';
import { hasRole } from '$lib/domain/roles';
import { db, type Transaction } from '../db';
import type { Database } from '../db/connect';
import { startsFrom } from '../db/queries';
import { bookings, boxes, boxPorts, gloveChanges, outages, outbox, users } from '../db/schema';
import type { Actor } from './accounts';
import { forbidden, notFound, ServiceError } from './errors';

export function mustManage(
	actor: Actor,
	message = 'Only a manager can take a box out of service.'
) {
	if (!hasRole(actor.role, 'manager')) throw forbidden(message);
}

/**
 * The open bookings on the box whose hold [start_at, blocked_until) overlaps [start, end):
 * holdOverlaps of $lib/domain/booking-rules, the rule that also refuses a new booking, so an
 * outage starting in a purge buffer cancels its booking. The SQL selects by that span, the
 * predicate decides. With `lock`, the rows read are locked for the caller's transaction,
 * which holds the box's lock (the certified one, db/locks.ts) and cancels them: no lock
 * here needs to be a write of its own.
 */
export async function overlapping(
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

export const cancellationKey = (bookingId: number, sequence: number) =>
	`booking:${bookingId}:cancelled:${sequence}`;

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

/** What moving an outage's expected end to `end` would cancel; changes nothing. */
export async function previewExtension(actor: Actor, outageId: number, end: Date) {
	mustManage(actor, 'Only a manager can change an outage.');
	const [outage] = await db.select().from(outages).where(eq(outages.id, outageId));
	if (!outage) throw notFound('The outage');
	if (end <= outage.endAt) return [];
	const rows = await overlapping(db, outage.boxId, outage.endAt, end, false);
	return rows.map((b) => ({ id: b.id, userName: b.name, start: b.startAt, end: b.endAt }));
}

/**
 * What "End now" would do to the outage at `now`, refused as endOutage refuses: `ended` for
 * one under way (the box goes back in service), `withdrawn` for one that has not begun,
 * with how many bookings it cancelled (they stay cancelled); changes nothing.
 */
export async function previewEnd(actor: Actor, outageId: number, now = new Date()) {
	mustManage(actor, 'Only a manager can end an outage.');
	const [outage] = await db.select().from(outages).where(eq(outages.id, outageId));
	if (!outage) throw notFound('The outage');
	await refuseOpenChange(db, outageId);
	if (outage.endAt <= now) throw new ServiceError(409, 'This outage has already ended.');
	const [cancelled, changes] = await Promise.all([
		db.select({ id: bookings.id }).from(bookings).where(eq(bookings.outageId, outageId)),
		db
			.select({ id: gloveChanges.id })
			.from(gloveChanges)
			.where(eq(gloveChanges.outageId, outageId))
			.limit(1)
	]);
	// As closeOutage decides: not begun and no glove change on it, it is withdrawn.
	const withdrawn = outage.startAt > now && !changes.length;
	return {
		outage,
		what: withdrawn ? ('withdrawn' as const) : ('ended' as const),
		cancelledCount: cancelled.length
	};
}

/** Refuses while a glove change on the outage is open: it keeps the port sealed. */
export async function refuseOpenChange(q: Database | Transaction, outageId: number) {
	const [open] = await q
		.select({ id: gloveChanges.id })
		.from(gloveChanges)
		.where(and(eq(gloveChanges.outageId, outageId), eq(gloveChanges.status, 'open')));
	if (open)
		throw new ServiceError(
			409,
			'A glove change on this outage is still open: complete or abandon it first.',
			{ changeId: open.id }
		);
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
		.select({
			id: gloveChanges.id,
			status: gloveChanges.status,
			portId: gloveChanges.portId,
			position: boxPorts.position
		})
		.from(gloveChanges)
		.innerJoin(boxPorts, eq(boxPorts.id, gloveChanges.portId))
		.where(eq(gloveChanges.outageId, outageId));
	return { ...row, changes, cancelled: await cancelledBy(outageId) };
}
