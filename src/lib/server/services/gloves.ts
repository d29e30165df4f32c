import { and, desc, eq, inArray, isNull } from 'drizzle-orm';
import { handForPosition } from '$lib/domain/boxes';
import { MIN_FLUSH_CYCLES, flushEstimate } from '$lib/domain/flush';
import {
	gloveChangeSteps,
	handWarning,
	isCatastrophic,
	isDamaged,
	type DamageLocation,
	type GloveChangeStepKey
} from '$lib/domain/gloves';
import { hasRole } from '$lib/domain/roles';
import { db } from '../db';
import {
	auditLog,
	bookings,
	boxes,
	boxPorts,
	gloveChanges,
	gloveInspections,
	gloves,
	outages,
	users,
	type GloveChangeStep,
	type NewGloveSpec
} from '../db/schema';
import type { Actor } from './accounts';
import { audit } from './audit';
import { notifyManagers } from './notifications';
import { forbidden, notFound, ServiceError } from './errors';
import { closeOutage, openOutage } from './outages';
import { missingProof } from './leak-tests';
import { transaction } from '../db/transaction';

/** The glove on each of a box's ports now, with its last inspection. */
export async function glovesOfBox(boxId: number) {
	const ports = await db
		.select()
		.from(boxPorts)
		.where(eq(boxPorts.boxId, boxId))
		.orderBy(boxPorts.sortOrder);
	if (!ports.length) return [];
	const current = await db
		.select()
		.from(gloves)
		.where(
			and(
				inArray(
					gloves.portId,
					ports.map((p) => p.id)
				),
				isNull(gloves.removedAt)
			)
		);
	const inspections = current.length
		? await db
				.select()
				.from(gloveInspections)
				.where(
					inArray(
						gloveInspections.gloveId,
						current.map((g) => g.id)
					)
				)
				.orderBy(desc(gloveInspections.at))
		: [];
	const open = await db
		.select({ id: gloveChanges.id, portId: gloveChanges.portId })
		.from(gloveChanges)
		.where(
			and(
				inArray(
					gloveChanges.portId,
					ports.map((p) => p.id)
				),
				isNull(gloveChanges.completedAt)
			)
		);
	return ports.map((port) => {
		const glove = current.find((g) => g.portId === port.id) ?? null;
		const history = glove ? inspections.filter((i) => i.gloveId === glove.id) : [];
		return {
			port,
			glove,
			lastInspection: history[0] ?? null,
			damaged: isDamaged(history),
			openChangeId: open.find((c) => c.portId === port.id)?.id ?? null
		};
	});
}

export type DamageReport = {
	gloveId: number;
	location: DamageLocation;
	hand: 'left' | 'right';
	holeSizeMm: number;
	notes?: string;
	photoKey?: string;
};

/** Any member may report damage; the answer says whether it is catastrophic. */
/** A box's port and the glove fitted on it (or null), or a 404 when the port is not the box's. */
export async function portAndGlove(boxId: number, portId: number) {
	const [port] = await db
		.select({ id: boxPorts.id, position: boxPorts.position, boxName: boxes.name, boxId: boxes.id })
		.from(boxPorts)
		.innerJoin(boxes, eq(boxes.id, boxPorts.boxId))
		.where(and(eq(boxPorts.id, portId), eq(boxPorts.boxId, boxId)));
	if (!port) throw notFound('That port');
	const [glove] = await db
		.select()
		.from(gloves)
		.where(and(eq(gloves.portId, portId), isNull(gloves.removedAt)));
	return { port, glove: glove ?? null };
}

/**
 * Records damage to a fitted glove. A catastrophic hole tells the managers in the same
 * transaction, so the notice exists exactly when the report does.
 */
export async function reportDamage(
	actor: Actor & { name: string },
	input: DamageReport,
	now = new Date()
) {
	const [glove] = await db.select().from(gloves).where(eq(gloves.id, input.gloveId));
	if (!glove || glove.removedAt) throw notFound('The glove');
	const [port] = await db
		.select({ position: boxPorts.position, boxId: boxes.id, boxName: boxes.name })
		.from(boxPorts)
		.innerJoin(boxes, eq(boxes.id, boxPorts.boxId))
		.where(eq(boxPorts.id, glove.portId));
	const catastrophic = isCatastrophic(input.holeSizeMm);
	const [created] = await transaction(async (tx) => {
		const row = await tx
			.insert(gloveInspections)
			.values({
				gloveId: glove.id,
				at: now,
				byUserId: actor.id,
				damaged: true,
				location: input.location,
				hand: input.hand,
				holeSizeMm: input.holeSizeMm,
				action: catastrophic ? 'none' : 'change_scheduled',
				notes: input.notes || null,
				photoKey: input.photoKey ?? null
			})
			.$returningId();
		await audit(tx, {
			actorId: actor.id,
			action: 'glove.damage_reported',
			entity: 'glove',
			entityId: glove.id,
			details: { ...input, catastrophic }
		});
		if (catastrophic && port) {
			await notifyManagers(
				`Glove failure on ${port.boxName}, ${port.position}`,
				`${actor.name} reported a ${input.holeSizeMm} mm hole (${input.location.replace('_', ' ')}). Take the box out of service.`,
				`/boxes/${port.boxId}`,
				`glove-damage:${row[0].id}`,
				tx
			);
		}
		return row;
	});
	return { inspectionId: created.id, catastrophic, portId: glove.portId };
}

/** Starts a guided glove change on a port: an outage opens at once (default two hours). */
export async function startGloveChange(
	actor: Actor,
	portId: number,
	expectedEnd?: Date,
	now = new Date()
) {
	if (!hasRole(actor.role, 'manager')) throw forbidden('Only a manager can run a glove change.');
	const [port] = await db
		.select({ id: boxPorts.id, boxId: boxPorts.boxId, position: boxPorts.position })
		.from(boxPorts)
		.where(eq(boxPorts.id, portId));
	if (!port) throw notFound('The port');
	const [glove] = await db
		.select()
		.from(gloves)
		.where(and(eq(gloves.portId, portId), isNull(gloves.removedAt)));
	if (!glove)
		throw new ServiceError(409, 'This port has no glove recorded, so there is nothing to change.');
	const end = expectedEnd ?? new Date(now.getTime() + 2 * 3_600_000);
	if (end <= now)
		throw new ServiceError(400, 'The expected end must be in the future.', {
			fields: { end: 'The expected end must be in the future.' }
		});

	return transaction(async (tx) => {
		const { outageId, cancelledBookingIds } = await openOutage(
			tx,
			actor,
			port.boxId,
			{
				start: now,
				end,
				kind: 'glove_change',
				reason: `Glove change on the ${port.position} port`
			},
			now
		);
		// Asked under the box lock openOutage holds, so two managers cannot both start one.
		const [open] = await tx
			.select({ id: gloveChanges.id })
			.from(gloveChanges)
			.where(and(eq(gloveChanges.portId, portId), isNull(gloveChanges.completedAt)));
		if (open)
			throw new ServiceError(409, 'A glove change on this port is already under way.', {
				changeId: open.id
			});
		const [created] = await tx
			.insert(gloveChanges)
			.values({ outageId, portId, oldGloveId: glove.id, startedBy: actor.id, startedAt: now })
			.$returningId();
		await audit(tx, {
			actorId: actor.id,
			action: 'glove_change.started',
			entity: 'glove_change',
			entityId: created.id,
			details: { portId, outageId }
		});
		return { changeId: created.id, outageId, cancelledBookingIds };
	});
}

export async function getGloveChange(id: number) {
	const [change] = await db.select().from(gloveChanges).where(eq(gloveChanges.id, id));
	if (!change) throw notFound('The glove change');
	const [port] = await db.select().from(boxPorts).where(eq(boxPorts.id, change.portId));
	const [box] = await db
		.select({ id: boxes.id, name: boxes.name, gas: boxes.gas, volumeL: boxes.volumeL })
		.from(boxes)
		.where(eq(boxes.id, port.boxId));
	const [outage] = await db.select().from(outages).where(eq(outages.id, change.outageId));
	// What still holds the box out of service, for boxes that need proof before it returns.
	const proofMissing = change.completedAt ? null : await missingProof(db, box.id, change.steps);
	// The outage's own audit entries name the bookings it cancelled (creation and any
	// later extension), so the list is exact, not guessed from reasons or times.
	const entries = await db
		.select({ details: auditLog.details })
		.from(auditLog)
		.where(
			and(
				eq(auditLog.entity, 'outage'),
				eq(auditLog.entityId, String(outage.id)),
				inArray(auditLog.action, ['outage.created', 'outage.changed'])
			)
		);
	const cancelledIds = entries.flatMap(
		(e) => (e.details as { cancelledBookingIds?: number[] } | null)?.cancelledBookingIds ?? []
	);
	const cancelled = cancelledIds.length
		? await db
				.select({
					id: bookings.id,
					startAt: bookings.startAt,
					endAt: bookings.endAt,
					userName: users.name
				})
				.from(bookings)
				.innerJoin(users, eq(users.id, bookings.userId))
				.where(inArray(bookings.id, cancelledIds))
		: [];
	const [oldGlove] = change.oldGloveId
		? await db.select().from(gloves).where(eq(gloves.id, change.oldGloveId))
		: [null];
	const spec = change.newGlove;
	return {
		change,
		port,
		box,
		proofMissing,
		outage,
		cancelled,
		oldGlove,
		handWarning: spec
			? handWarning(handForPosition(port.position), spec.hand, spec.turnedInsideOut)
			: null
	};
}

/** The flush estimate after the cycles done so far, for a glove of about 2 L (common practice). */
export function flushAfter(
	boxVolumeL: number,
	cycles: number,
	gloveVolumeL = 2,
	residualVolumeL = 0.2
) {
	return flushEstimate({ boxVolumeL, gloveVolumeL, residualVolumeL, cycles });
}

export async function recordStep(
	actor: Actor,
	changeId: number,
	key: GloveChangeStepKey,
	options: { detail?: string; newGlove?: NewGloveSpec } = {},
	now = new Date()
) {
	if (!hasRole(actor.role, 'manager')) throw forbidden('Only a manager can run a glove change.');
	if (!gloveChangeSteps.some((s) => s.key === key)) throw new ServiceError(400, 'Unknown step.');
	if (key === 'new_glove_fitted' && !options.newGlove) {
		throw new ServiceError(400, 'Record the new glove’s material, size, thickness and hand.');
	}
	const [who] = await db.select({ name: users.name }).from(users).where(eq(users.id, actor.id));
	await transaction(async (tx) => {
		const [change] = await tx
			.select()
			.from(gloveChanges)
			.where(eq(gloveChanges.id, changeId))
			.for('update');
		if (!change) throw notFound('The glove change');
		if (change.completedAt) throw new ServiceError(409, 'This glove change is complete.');
		const step: GloveChangeStep = {
			key,
			at: now.toISOString(),
			byId: actor.id,
			byName: who?.name ?? '',
			detail: options.detail
		};
		await tx
			.update(gloveChanges)
			.set({
				steps: [...change.steps, step],
				flushCycles: key === 'flush_cycle' ? change.flushCycles + 1 : change.flushCycles,
				...(options.newGlove ? { newGlove: options.newGlove } : {})
			})
			.where(eq(gloveChanges.id, changeId));
	});
}

/**
 * Completes the change: the new glove goes on the port, the old one is retired and the
 * outage ends. Fewer than three flush cycles needs a manager's written override.
 */
export async function completeGloveChange(
	actor: Actor,
	changeId: number,
	overrideNote?: string,
	now = new Date()
) {
	if (!hasRole(actor.role, 'manager'))
		throw forbidden('Only a manager can complete a glove change.');
	return transaction(async (tx) => {
		const [change] = await tx
			.select()
			.from(gloveChanges)
			.where(eq(gloveChanges.id, changeId))
			.for('update');
		if (!change) throw notFound('The glove change');
		if (change.completedAt) throw new ServiceError(409, 'This glove change is already complete.');
		if (!change.newGlove)
			throw new ServiceError(
				422,
				'Record the new glove (material, size, thickness, hand) before completing.'
			);
		const note = overrideNote?.trim();
		if (change.flushCycles < MIN_FLUSH_CYCLES && !note) {
			const message = `Only ${change.flushCycles} flush cycle${change.flushCycles === 1 ? '' : 's'} recorded; at least ${MIN_FLUSH_CYCLES} are needed, or a written override.`;
			throw new ServiceError(422, message, { fields: { overrideNote: message } });
		}
		const [port] = await tx
			.select({ boxId: boxPorts.boxId })
			.from(boxPorts)
			.where(eq(boxPorts.id, change.portId));
		const proof = port ? await missingProof(tx, port.boxId, change.steps) : null;
		if (proof) throw new ServiceError(422, proof, { fields: { proof } });
		if (change.oldGloveId) {
			await tx
				.update(gloves)
				.set({ removedAt: now, removedReason: 'Replaced in a glove change' })
				.where(eq(gloves.id, change.oldGloveId));
		}
		const [fitted] = await tx
			.insert(gloves)
			.values({ portId: change.portId, ...change.newGlove, installedAt: now })
			.$returningId();
		await tx
			.update(gloveChanges)
			.set({
				newGloveId: fitted.id,
				completedAt: now,
				completedBy: actor.id,
				overrideNote: note || null
			})
			.where(eq(gloveChanges.id, changeId));
		const [outage] = await tx
			.select({ endAt: outages.endAt })
			.from(outages)
			.where(eq(outages.id, change.outageId));
		if (outage && outage.endAt > now) await closeOutage(tx, actor, change.outageId, now);
		await audit(tx, {
			actorId: actor.id,
			action: 'glove_change.completed',
			entity: 'glove_change',
			entityId: changeId,
			details: { newGloveId: fitted.id, flushCycles: change.flushCycles, override: note || null }
		});
		return { newGloveId: fitted.id };
	});
}

/** Every glove the box's ports have had, newest first, with all their inspections. */
export async function gloveHistory(boxId: number) {
	const rows = await db
		.select({ glove: gloves, position: boxPorts.position })
		.from(gloves)
		.innerJoin(boxPorts, eq(boxPorts.id, gloves.portId))
		.where(eq(boxPorts.boxId, boxId))
		.orderBy(desc(gloves.installedAt));
	const inspections = rows.length
		? await db
				.select({ inspection: gloveInspections, byName: users.name })
				.from(gloveInspections)
				.leftJoin(users, eq(users.id, gloveInspections.byUserId))
				.where(
					inArray(
						gloveInspections.gloveId,
						rows.map((r) => r.glove.id)
					)
				)
				.orderBy(desc(gloveInspections.at))
		: [];
	return rows.map((r) => ({
		...r.glove,
		position: r.position,
		inspections: inspections
			.filter((i) => i.inspection.gloveId === r.glove.id)
			.map((i) => ({ ...i.inspection, byName: i.byName }))
	}));
}
