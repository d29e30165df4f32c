import { and, desc, eq, inArray, isNull } from 'drizzle-orm';
import { isCatastrophic, isDamaged, locationLabel, type DamageLocation } from '$lib/domain/gloves';
import { db } from '../db';
import { boxes, boxPorts, gloveChanges, gloveInspections, gloves, users } from '../db/schema';
import type { Actor } from './accounts';
import { audit } from './audit';
import { notifyManagers } from './notifications';
import { notFound } from './errors';
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
	// The latest change on each port: open or abandoned, the port stays sealed.
	const changes = await db
		.select({ id: gloveChanges.id, portId: gloveChanges.portId, status: gloveChanges.status })
		.from(gloveChanges)
		.where(
			inArray(
				gloveChanges.portId,
				ports.map((p) => p.id)
			)
		)
		.orderBy(desc(gloveChanges.id));
	return ports.map((port) => {
		const glove = current.find((g) => g.portId === port.id) ?? null;
		const history = glove ? inspections.filter((i) => i.gloveId === glove.id) : [];
		const last = changes.find((c) => c.portId === port.id);
		return {
			port,
			glove,
			lastInspection: history[0] ?? null,
			damaged: isDamaged(history),
			openChangeId: last?.status === 'open' ? last.id : null,
			sealed: last !== undefined && last.status !== 'completed',
			lastChangeId: last?.id ?? null
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
 * Records damage to a fitted glove; any member may. Every report tells the managers (in
 * the app and by e-mail, linking to the port) in the same transaction, so the notice
 * exists exactly when the report does. The answer says whether the hole is catastrophic.
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
		if (port) {
			const where = `${input.holeSizeMm} mm hole (${locationLabel[input.location].toLowerCase()}, ${input.hand} hand)`;
			await notifyManagers(
				catastrophic
					? `Glove failure on ${port.boxName}, ${port.position} port`
					: `Glove damage on ${port.boxName}, ${port.position} port`,
				catastrophic
					? `${actor.name} reported a ${where}: a catastrophic failure. Seal the port and take the box out of service now.`
					: `${actor.name} reported a ${where}. Plan the glove change from the port's page.`,
				`/boxes/${port.boxId}/ports/${glove.portId}`,
				`glove-damage:${row[0].id}`,
				tx
			);
		}
		return row;
	});
	return { inspectionId: created.id, catastrophic, portId: glove.portId };
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

/** A port's page: the glove on it, that glove's inspections, and its latest change. */
export async function portView(boxId: number, portId: number) {
	const { port, glove } = await portAndGlove(boxId, portId);
	const inspections = glove
		? await db
				.select({ inspection: gloveInspections, byName: users.name })
				.from(gloveInspections)
				.leftJoin(users, eq(users.id, gloveInspections.byUserId))
				.where(eq(gloveInspections.gloveId, glove.id))
				.orderBy(desc(gloveInspections.at))
		: [];
	const [lastChange] = await db
		.select({ id: gloveChanges.id, status: gloveChanges.status })
		.from(gloveChanges)
		.where(eq(gloveChanges.portId, portId))
		.orderBy(desc(gloveChanges.id))
		.limit(1);
	const history = inspections.map((i) => ({ ...i.inspection, byName: i.byName }));
	return {
		port,
		glove,
		inspections: history,
		damaged: isDamaged(history),
		catastrophic: history.some(
			(i) => i.damaged && i.action !== 'replaced' && isCatastrophic(i.holeSizeMm ?? 0)
		),
		lastChange: lastChange ?? null
	};
}
