// The glove change under way, to the box back in service: its steps, completion and
// abandonment (starting one is glove-change-start.ts). The steps' order and what completion
// needs are decided in domain/glove-change.ts; this module reads, locks and stores. Every
// write that changes the box's time or state locks the box row first.
import { and, desc, eq, gte, isNull, max, ne } from 'drizzle-orm';
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
import { notFound, ServiceError } from './errors';
import { releaseCheck } from './leak-tests';
import { returnToStock, takeFromStock } from './glove-stock';
import { mustManage } from './glove-change-start';
import { cancelledBy } from './outage-reads';
import { closeOutage } from './outages';

type Q = Database | Transaction;

/**
 * The box a change is on, read before its transaction: the box lock must be the
 * transaction's first statement (db/locks.ts), and a change never moves to another port.
 */
async function boxOfChange(changeId: number) {
	const [row] = await db
		.select({ boxId: boxPorts.boxId })
		.from(gloveChanges)
		.innerJoin(boxPorts, eq(boxPorts.id, gloveChanges.portId))
		.where(eq(gloveChanges.id, changeId));
	if (!row) throw notFound('The glove change');
	return row.boxId;
}

/** The box's lock first, then the change's row (which every caller updates). */
async function lockChange(tx: Transaction, boxId: number, changeId: number) {
	const box = await lockBox(tx, boxId);
	const [change] = await tx
		.select()
		.from(gloveChanges)
		.where(eq(gloveChanges.id, changeId))
		.for('update');
	if (!change) throw notFound('The glove change');
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
	const boxId = await boxOfChange(changeId);
	await transaction(async (tx) => {
		const { change } = await lockChange(tx, boxId, changeId);
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
	const boxId = await boxOfChange(changeId);
	await transaction(async (tx) => {
		const { change } = await lockChange(tx, boxId, changeId);
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
	const boxId = await boxOfChange(changeId);
	await transaction(async (tx) => {
		const { change } = await lockChange(tx, boxId, changeId);
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
	const boxId = await boxOfChange(changeId);
	return transaction(async (tx) => {
		const { box, change } = await lockChange(tx, boxId, changeId);
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
		const fitted = await putOnPort(tx, port.id, glove, now);
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

/** Records the glove fitted in a change as the port's glove from `now`. */
async function putOnPort(tx: Transaction, portId: number, glove: FittedGlove, now: Date) {
	const [row] = await tx
		.insert(gloves)
		.values({
			portId,
			material: glove.material,
			size: glove.size,
			thicknessMm: glove.thicknessMm,
			hand: glove.hand,
			turnedInsideOut: glove.turnedInsideOut,
			installedAt: now
		})
		.$returningId();
	return row;
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
	const boxId = await boxOfChange(changeId);
	await transaction(async (tx) => {
		const { change } = await lockChange(tx, boxId, changeId);
		mustBeOpen(change);
		const done = (key: StepKey) =>
			change.steps.some((e) => e.key === key && e.skipReason === undefined);
		if (done('old_glove_removed'))
			await tx
				.update(gloves)
				.set({ removedAt: now, removedReason: 'Taken off in an abandoned glove change' })
				.where(and(eq(gloves.portId, change.portId), isNull(gloves.removedAt)));
		const glove = fittedGlove(change.steps);
		const newGloveId = glove ? (await putOnPort(tx, change.portId, glove, now)).id : null;
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
