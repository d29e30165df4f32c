// Starting a glove change: the preview of what it would cancel, and the start itself, which
// takes over the box's glove-change outage or opens one (DEVELOPERS.md, "Glove changes").
import { and, eq, gt, isNull, lte } from 'drizzle-orm';
import { hasRole } from '$lib/domain/roles';
import { db, type Transaction } from '../db';
import type { Database } from '../db/connect';
import { lockBox } from '../db/locks';
import { boxes, boxPorts, gloveChanges, gloves, outages, type Box } from '../db/schema';
import { transaction } from '../db/transaction';
import type { Actor } from './accounts';
import { audit } from './audit';
import { forbidden, ServiceError } from './errors';
import { previewOutage } from './outage-reads';
import { moveOutage, openOutage } from './outages';

type Q = Database | Transaction;

/** A change opened without an expected end is planned for two hours. */
const DEFAULT_LENGTH_MS = 2 * 3_600_000;

export function mustManage(actor: Actor) {
	if (!hasRole(actor.role, 'manager')) throw forbidden('Only a manager can run a glove change.');
}

async function portOfBox(q: Q, boxId: number, portId: number) {
	const [port] = await q
		.select()
		.from(boxPorts)
		.where(and(eq(boxPorts.id, portId), eq(boxPorts.boxId, boxId)));
	if (!port)
		throw new ServiceError(404, 'That port is not on this box.', {
			fields: { portId: 'That port is not on this box.' }
		});
	return port;
}

async function openChangeOn(q: Q, portId: number) {
	const [open] = await q
		.select({ id: gloveChanges.id })
		.from(gloveChanges)
		.where(and(eq(gloveChanges.portId, portId), eq(gloveChanges.status, 'open')));
	return open ?? null;
}

/**
 * The box's glove-change outage a change started now takes over: one that covers now, or
 * one planned to begin before the change's expected end (its start is brought to now).
 */
async function outageToTakeOver(q: Q, boxId: number, now: Date, until: Date) {
	const [found] = await q
		.select()
		.from(outages)
		.where(
			and(
				eq(outages.boxId, boxId),
				eq(outages.kind, 'glove_change'),
				gt(outages.endAt, now),
				lte(outages.startAt, until)
			)
		)
		.orderBy(outages.startAt)
		.limit(1);
	return found ?? null;
}

/** Where a change started now would sit: the outage it takes over, or the one it opens. */
async function windowFor(q: Q, boxId: number, expectedEnd: Date | undefined, now: Date) {
	if (expectedEnd && expectedEnd <= now)
		throw new ServiceError(400, 'The expected end must be in the future.', {
			fields: { expectedEnd: 'The expected end must be in the future.' }
		});
	const until = expectedEnd ?? new Date(now.getTime() + DEFAULT_LENGTH_MS);
	const takeOver = await outageToTakeOver(q, boxId, now, until);
	if (!takeOver) return { takeOver: null, start: now, end: until };
	const start = takeOver.startAt < now ? takeOver.startAt : now;
	const end = expectedEnd && expectedEnd > takeOver.endAt ? expectedEnd : takeOver.endAt;
	return { takeOver, start, end };
}

/** What starting a change on the port now would do, changing nothing: the preview. */
export async function planGloveChange(
	actor: Actor,
	boxId: number,
	portId: number,
	expectedEnd?: Date,
	now = new Date()
) {
	mustManage(actor);
	const port = await portOfBox(db, boxId, portId);
	const [box] = await db.select().from(boxes).where(eq(boxes.id, boxId));
	const open = await openChangeOn(db, portId);
	const window = await windowFor(db, boxId, expectedEnd, now);
	const [glove] = await db
		.select()
		.from(gloves)
		.where(and(eq(gloves.portId, portId), isNull(gloves.removedAt)));
	const bookings = await previewOutage(actor, boxId, { start: now, end: window.end });
	return { box, port, glove: glove ?? null, openChangeId: open?.id ?? null, ...window, bookings };
}

/**
 * Starts a change on a port: the box is locked, a change already under way on the port is
 * refused before anything is cancelled, then the change takes over the box's glove-change
 * outage (see outageToTakeOver) or opens one from now.
 */
export async function startGloveChange(
	actor: Actor,
	boxId: number,
	input: { portId: number; expectedEnd?: Date },
	now = new Date()
) {
	mustManage(actor);
	return transaction(async (tx) => {
		const box = await lockBox(tx, boxId);
		const port = await portOfBox(tx, boxId, input.portId);
		const open = await openChangeOn(tx, port.id);
		if (open)
			throw new ServiceError(409, 'A glove change on this port is already under way.', {
				changeId: open.id
			});
		const { outageId, cancelledBookingIds } = await outageFor(
			tx,
			actor,
			box,
			port.position,
			input.expectedEnd,
			now
		);
		const [glove] = await tx
			.select({ id: gloves.id })
			.from(gloves)
			.where(and(eq(gloves.portId, port.id), isNull(gloves.removedAt)));
		const [created] = await tx
			.insert(gloveChanges)
			.values({
				outageId,
				portId: port.id,
				oldGloveId: glove?.id ?? null,
				startedBy: actor.id,
				startedAt: now
			})
			.$returningId();
		await audit(tx, {
			actorId: actor.id,
			action: 'glove_change.started',
			entity: 'glove_change',
			entityId: created.id,
			details: { portId: port.id, outageId, cancelledBookingIds }
		});
		return { id: created.id, outageId, cancelledBookingIds };
	});
}

async function outageFor(
	tx: Transaction,
	actor: Actor,
	box: Box,
	position: string,
	expectedEnd: Date | undefined,
	now: Date
) {
	const window = await windowFor(tx, box.id, expectedEnd, now);
	if (!window.takeOver) {
		return openOutage(
			tx,
			actor,
			box,
			{
				start: now,
				end: window.end,
				kind: 'glove_change',
				reason: `Glove change on the ${position} port`
			},
			now
		);
	}
	const outage = window.takeOver;
	const moved = window.start < outage.startAt || window.end > outage.endAt;
	const cancelledBookingIds = moved
		? await moveOutage(tx, actor, box, outage, { start: window.start, end: window.end }, now)
		: [];
	return { outageId: outage.id, cancelledBookingIds };
}
