// The glove change, from start to the box back in service. The steps' order and what
// completion needs are decided in domain/glove-change.ts; this module reads, locks and
// stores. Every write that changes the box's time or state locks the box row first.
import { and, desc, eq, gt, gte, isNull, lte, max, ne } from 'drizzle-orm';
import { handForPosition } from '$lib/domain/boxes';
import {
	applyStep,
	completionBlockers,
	fittedGlove,
	flushCycles,
	flushTable,
	gloveVolumeForSize,
	nextSteps,
	undoStep,
	type FittedGlove,
	type StepEntry,
	type StepKey
} from '$lib/domain/glove-change';
import { hasRole } from '$lib/domain/roles';
import { db, type Transaction } from '../db';
import type { Database } from '../db/connect';
import { lockBox } from '../db/locks';
import {
	atmosphereReadings,
	boxes,
	boxPorts,
	gloveChanges,
	gloves,
	outages,
	users,
	type Box,
	type GloveChange
} from '../db/schema';
import { transaction } from '../db/transaction';
import type { Actor } from './accounts';
import { audit } from './audit';
import { forbidden, notFound, ServiceError } from './errors';
import { releaseCheck } from './leak-tests';
import { returnToStock, takeFromStock } from './glove-stock';
import { cancelledBy, closeOutage, moveOutage, openOutage, previewOutage } from './outages';

/** A change opened without an expected end is planned for two hours. */
const DEFAULT_LENGTH_MS = 2 * 3_600_000;

function mustManage(actor: Actor) {
	if (!hasRole(actor.role, 'manager')) throw forbidden('Only a manager can run a glove change.');
}

type Q = Database | Transaction;

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

// ---------------------------------------------------------------------------------------

async function lockChange(tx: Transaction, changeId: number) {
	const [row] = await tx
		.select({ boxId: boxPorts.boxId })
		.from(gloveChanges)
		.innerJoin(boxPorts, eq(boxPorts.id, gloveChanges.portId))
		.where(eq(gloveChanges.id, changeId));
	if (!row) throw notFound('The glove change');
	const box = await lockBox(tx, row.boxId);
	const [change] = await tx
		.select()
		.from(gloveChanges)
		.where(eq(gloveChanges.id, changeId))
		.for('update');
	return { box, change };
}

function mustBeOpen(change: GloveChange) {
	if (change.status !== 'open')
		throw new ServiceError(409, `This glove change is ${change.status}.`, {
			code: 'change_closed',
			status: change.status
		});
}

export type StepInput = { step: StepKey; skipReason?: string; glove?: FittedGlove };

/** Records the next step (or skips it with a reason); refused out of order. */
export async function recordStep(
	actor: Actor,
	changeId: number,
	input: StepInput,
	now = new Date()
) {
	mustManage(actor);
	const [who] = await db.select({ name: users.name }).from(users).where(eq(users.id, actor.id));
	await transaction(async (tx) => {
		const { change } = await lockChange(tx, changeId);
		const entry: StepEntry = {
			key: input.step,
			at: now.toISOString(),
			byId: actor.id,
			byName: who?.name ?? '',
			...(input.skipReason !== undefined ? { skipReason: input.skipReason } : {}),
			...(input.step === 'new_glove_fitted' && input.glove
				? { glove: { ...input.glove, stockId: input.glove.stockId ?? null } }
				: {})
		};
		const result = applyStep(change.status, change.steps, entry);
		if (!result.ok) {
			const r = result.refusal;
			if (r.code === 'step_out_of_order')
				throw new ServiceError(409, r.message, { code: r.code, nextSteps: r.nextSteps });
			if (r.code === 'change_closed') throw new ServiceError(409, r.message, { code: r.code });
			const field = r.code === 'glove_missing' ? 'glove' : 'skipReason';
			throw new ServiceError(400, r.message, { fields: { [field]: r.message } });
		}
		if (entry.glove) await takeFromStock(tx, entry.glove, now);
		await tx
			.update(gloveChanges)
			.set({ steps: result.entries, flushCycles: flushCycles(result.entries) })
			.where(eq(gloveChanges.id, changeId));
		await audit(tx, {
			actorId: actor.id,
			action: input.skipReason !== undefined ? 'glove_change.step_skipped' : 'glove_change.step',
			entity: 'glove_change',
			entityId: changeId,
			details: entry
		});
	});
}

/** Undoes the last step; a glove taken from stock goes back. */
export async function undoLastStep(actor: Actor, changeId: number) {
	mustManage(actor);
	await transaction(async (tx) => {
		const { change } = await lockChange(tx, changeId);
		mustBeOpen(change);
		const { entries, undone } = undoStep(change.steps);
		if (!undone) throw new ServiceError(409, 'No step has been recorded yet.');
		await returnToStock(tx, undone.glove);
		await tx
			.update(gloveChanges)
			.set({ steps: entries, flushCycles: flushCycles(entries) })
			.where(eq(gloveChanges.id, changeId));
		await audit(tx, {
			actorId: actor.id,
			action: 'glove_change.step_undone',
			entity: 'glove_change',
			entityId: changeId,
			details: undone
		});
	});
}

/** Sets the glove volume the flush estimate uses. */
export async function setGloveVolume(actor: Actor, changeId: number, gloveVolumeL: number) {
	mustManage(actor);
	await transaction(async (tx) => {
		const { change } = await lockChange(tx, changeId);
		mustBeOpen(change);
		await tx.update(gloveChanges).set({ gloveVolumeL }).where(eq(gloveChanges.id, changeId));
	});
}

/** What completion would find: the flush table and every blocker, from the stored change. */
async function assess(
	q: Q,
	change: GloveChange,
	box: Box,
	port: { position: string },
	given: { overrideReason?: string; confirmHand?: boolean } = {}
) {
	const entries = change.steps;
	const cycles = flushCycles(entries);
	const [latest] = await q
		.select({ o2Ppm: atmosphereReadings.o2Ppm })
		.from(atmosphereReadings)
		.where(eq(atmosphereReadings.boxId, box.id))
		.orderBy(desc(atmosphereReadings.at))
		.limit(1);
	const fitted = fittedGlove(entries);
	const [old] = change.oldGloveId
		? await q.select({ size: gloves.size }).from(gloves).where(eq(gloves.id, change.oldGloveId))
		: [];
	const flush = flushTable({
		cycles,
		boxVolumeL: box.volumeL,
		gloveVolumeL: change.gloveVolumeL ?? gloveVolumeForSize(fitted?.size ?? old?.size ?? '8'),
		o2WarnPpm: box.o2WarnPpm,
		o2AlarmPpm: box.o2AlarmPpm,
		boxO2Ppm: latest?.o2Ppm ?? null
	});
	const lastFlush = entries.filter((e) => e.key === 'flush_cycle').at(-1);
	const since = new Date(
		lastFlush?.at ?? entries.find((e) => e.key === 'new_glove_fitted')?.at ?? change.startedAt
	);
	const opened = entries.find((e) => e.key === 'cover_removed' && e.skipReason === undefined);
	const [measured] = opened
		? await q
				.select({ o2: max(atmosphereReadings.o2Ppm) })
				.from(atmosphereReadings)
				.where(
					and(
						eq(atmosphereReadings.boxId, box.id),
						gte(atmosphereReadings.at, new Date(Math.floor(Date.parse(opened.at) / 1000) * 1000))
					)
				)
		: [];
	const blockers = completionBlockers({
		entries,
		portSide: handForPosition(port.position),
		overrideReason: given.overrideReason,
		confirmHand: given.confirmHand,
		releaseCheck: await releaseCheck(q, box.id, since),
		flush,
		o2SinceOpeningPpm: measured?.o2 == null ? null : Number(measured.o2)
	});
	return { cycles, flush, blockers };
}

/**
 * Completes the change once it is safe: the new glove goes on the port, whatever glove was
 * there is retired, and the outage ends now (unless another port's change still holds it).
 */
export async function completeGloveChange(
	actor: Actor,
	changeId: number,
	input: { overrideReason?: string; confirmHand?: boolean } = {},
	now = new Date()
) {
	mustManage(actor);
	return transaction(async (tx) => {
		const { box, change } = await lockChange(tx, changeId);
		mustBeOpen(change);
		const [port] = await tx.select().from(boxPorts).where(eq(boxPorts.id, change.portId));
		const { blockers, cycles } = await assess(tx, change, box, port, input);
		if (blockers.length)
			throw new ServiceError(422, 'The glove change cannot be completed yet.', {
				reasons: blockers
			});
		const glove = fittedGlove(change.steps)!;
		await tx
			.update(gloves)
			.set({ removedAt: now, removedReason: 'Replaced in a glove change' })
			.where(and(eq(gloves.portId, port.id), isNull(gloves.removedAt)));
		const [fitted] = await tx
			.insert(gloves)
			.values({
				portId: port.id,
				material: glove.material,
				size: glove.size,
				thicknessMm: glove.thicknessMm,
				hand: glove.hand,
				turnedInsideOut: glove.turnedInsideOut,
				installedAt: now
			})
			.$returningId();
		const override = input.overrideReason?.trim() || null;
		await tx
			.update(gloveChanges)
			.set({
				status: 'completed',
				newGloveId: fitted.id,
				completedAt: now,
				completedBy: actor.id,
				overrideNote: override,
				handConfirmed: Boolean(input.confirmHand)
			})
			.where(eq(gloveChanges.id, changeId));
		const outageEnded = await endIfLast(tx, actor, change, now);
		await audit(tx, {
			actorId: actor.id,
			action: 'glove_change.completed',
			entity: 'glove_change',
			entityId: changeId,
			details: { newGloveId: fitted.id, flushCycles: cycles, override, outageEnded }
		});
		return { newGloveId: fitted.id, outageEnded };
	});
}

/** Ends the change's outage now when no other open change shares it. */
async function endIfLast(tx: Transaction, actor: Actor, change: GloveChange, now: Date) {
	const [other] = await tx
		.select({ id: gloveChanges.id })
		.from(gloveChanges)
		.where(
			and(
				eq(gloveChanges.outageId, change.outageId),
				eq(gloveChanges.status, 'open'),
				ne(gloveChanges.id, change.id)
			)
		);
	if (other) return false;
	const [outage] = await tx
		.select({ endAt: outages.endAt })
		.from(outages)
		.where(eq(outages.id, change.outageId));
	if (!outage || outage.endAt <= now) return false;
	await closeOutage(tx, actor, change.outageId, now);
	return true;
}

/**
 * Abandons the change with a written reason. The port stays sealed and the box out of
 * service until a manager ends the outage; the port's glove record follows what was done
 * (an old glove taken off is retired, a new one fitted is recorded).
 */
export async function abandonGloveChange(
	actor: Actor,
	changeId: number,
	reason: string,
	now = new Date()
) {
	mustManage(actor);
	await transaction(async (tx) => {
		const { change } = await lockChange(tx, changeId);
		mustBeOpen(change);
		const done = (key: StepKey) =>
			change.steps.some((e) => e.key === key && e.skipReason === undefined);
		if (done('old_glove_removed'))
			await tx
				.update(gloves)
				.set({ removedAt: now, removedReason: 'Taken off in an abandoned glove change' })
				.where(and(eq(gloves.portId, change.portId), isNull(gloves.removedAt)));
		const glove = fittedGlove(change.steps);
		let newGloveId: number | null = null;
		if (glove) {
			const [row] = await tx
				.insert(gloves)
				.values({
					portId: change.portId,
					material: glove.material,
					size: glove.size,
					thicknessMm: glove.thicknessMm,
					hand: glove.hand,
					turnedInsideOut: glove.turnedInsideOut,
					installedAt: now
				})
				.$returningId();
			newGloveId = row.id;
		}
		await tx
			.update(gloveChanges)
			.set({
				status: 'abandoned',
				abandonedAt: now,
				abandonedBy: actor.id,
				abandonReason: reason,
				newGloveId
			})
			.where(eq(gloveChanges.id, changeId));
		await audit(tx, {
			actorId: actor.id,
			action: 'glove_change.abandoned',
			entity: 'glove_change',
			entityId: changeId,
			details: { reason, newGloveId }
		});
	});
}

/** Everything the change's page and its API show. */
export async function gloveChangeView(changeId: number) {
	const [change] = await db.select().from(gloveChanges).where(eq(gloveChanges.id, changeId));
	if (!change) throw notFound('The glove change');
	const [port] = await db.select().from(boxPorts).where(eq(boxPorts.id, change.portId));
	const [box] = await db.select().from(boxes).where(eq(boxes.id, port.boxId));
	const [outage] = await db.select().from(outages).where(eq(outages.id, change.outageId));
	const [oldGlove] = change.oldGloveId
		? await db.select().from(gloves).where(eq(gloves.id, change.oldGloveId))
		: [];
	const { cycles, flush, blockers } = await assess(db, change, box, port);
	return {
		change,
		box: {
			id: box.id,
			name: box.name,
			gas: box.gas,
			volumeL: box.volumeL,
			o2WarnPpm: box.o2WarnPpm,
			o2AlarmPpm: box.o2AlarmPpm,
			needsProof: box.gloveChangeNeedsProof
		},
		port: { ...port, side: handForPosition(port.position) },
		outage,
		oldGlove: oldGlove ?? null,
		fitted: fittedGlove(change.steps),
		cycles,
		nextSteps: change.status === 'open' ? nextSteps(change.steps) : [],
		flush,
		blockers: change.status === 'open' ? blockers : [],
		cancelled: await cancelledBy(change.outageId)
	};
}
