import { and, asc, count, desc, eq, gt, inArray, isNull, lte, sql } from 'drizzle-orm';
import { boxCondition, type BoxCondition } from '$lib/domain/boxes';
import type { ListQuery, ListSpec } from '$lib/domain/listing';
import { gloveState, isDamaged, type GloveState } from '$lib/domain/gloves';
import type { BoxInput } from '$lib/validation/boxes';
import { db, type Transaction } from '../db';
import {
	atmosphereReadings,
	boxes,
	boxPorts,
	boxRequiredModules,
	gloveChanges,
	gloveInspections,
	gloves,
	outages,
	trainingModules,
	type Box
} from '../db/schema';
import type { Actor } from './accounts';
import { audit } from './audit';
import { resettle } from './atmosphere';
import { isDuplicateKey, notFound, ServiceError } from './errors';
import { transaction } from '../db/transaction';
import { lockBox } from '../db/locks';
import { orderOf, pageInSql } from '../listing';

export type BoxSummary = {
	id: number;
	name: string;
	room: string;
	gas: Box['gas'];
	volumeL: number;
	condition: BoxCondition;
	status: Box['status'];
	atmosphereState: Box['atmosphereState'];
	ports: { id: number; position: string; diameterMm: number; gloveState: GloveState }[];
	requiredModules: { id: number; name: string }[];
	latestReading: { at: Date; o2Ppm: number; h2oPpm: number } | null;
	currentOutage: { id: number; endAt: Date; reason: string; kind: string } | null;
};

async function summarise(rows: Box[], now = new Date()): Promise<BoxSummary[]> {
	if (!rows.length) return [];
	const ids = rows.map((b) => b.id);
	const [ports, required, current, latest] = await Promise.all([
		db
			.select()
			.from(boxPorts)
			.where(inArray(boxPorts.boxId, ids))
			.orderBy(asc(boxPorts.sortOrder), asc(boxPorts.id)),
		db
			.select({
				boxId: boxRequiredModules.boxId,
				id: trainingModules.id,
				name: trainingModules.name
			})
			.from(boxRequiredModules)
			.innerJoin(trainingModules, eq(trainingModules.id, boxRequiredModules.moduleId))
			.where(inArray(boxRequiredModules.boxId, ids))
			.orderBy(asc(trainingModules.name)),
		db
			.select()
			.from(outages)
			.where(and(inArray(outages.boxId, ids), lte(outages.startAt, now), gt(outages.endAt, now))),
		// The newest reading per box, through the (box_id, at) index.
		db
			.select({
				boxId: atmosphereReadings.boxId,
				at: atmosphereReadings.at,
				o2Ppm: atmosphereReadings.o2Ppm,
				h2oPpm: atmosphereReadings.h2oPpm
			})
			.from(atmosphereReadings)
			.where(
				sql`(${atmosphereReadings.boxId}, ${atmosphereReadings.at}) IN (SELECT box_id, MAX(at) FROM atmosphere_readings WHERE box_id IN (${sql.join(ids, sql`, `)}) GROUP BY box_id)`
			)
	]);
	const portIds = ports.map((p) => p.id);
	const [fitted, openChanges] = portIds.length
		? await Promise.all([
				db
					.select({ id: gloves.id, portId: gloves.portId, installedAt: gloves.installedAt })
					.from(gloves)
					.where(and(inArray(gloves.portId, portIds), isNull(gloves.removedAt))),
				// Newest first: a port whose latest change is open or abandoned stays sealed.
				db
					.select({ portId: gloveChanges.portId, status: gloveChanges.status })
					.from(gloveChanges)
					.where(inArray(gloveChanges.portId, portIds))
					.orderBy(desc(gloveChanges.id))
			])
		: [[], []];
	// Damage reports of the fitted gloves; isDamaged decides, as on the box page and reports.
	const reports = fitted.length
		? await db
				.select({
					gloveId: gloveInspections.gloveId,
					damaged: gloveInspections.damaged,
					action: gloveInspections.action
				})
				.from(gloveInspections)
				.where(
					and(
						inArray(
							gloveInspections.gloveId,
							fitted.map((g) => g.id)
						),
						eq(gloveInspections.damaged, true)
					)
				)
		: [];
	const damagedGloves = new Set(
		fitted.filter((g) => isDamaged(reports.filter((r) => r.gloveId === g.id))).map((g) => g.id)
	);
	const stateOf = (portId: number) => {
		const glove = fitted.find((g) => g.portId === portId);
		return gloveState({
			installedAt: glove?.installedAt ?? null,
			damaged: glove ? damagedGloves.has(glove.id) : false,
			changeUnderWay:
				(openChanges.find((c) => c.portId === portId)?.status ?? 'completed') !== 'completed',
			now
		});
	};
	return rows.map((box) => {
		const outage = current.find((o) => o.boxId === box.id) ?? null;
		const reading = latest.find((r) => r.boxId === box.id) ?? null;
		return {
			id: box.id,
			name: box.name,
			room: box.room,
			gas: box.gas,
			volumeL: box.volumeL,
			status: box.status,
			atmosphereState: box.atmosphereState,
			condition: boxCondition(box.status, box.atmosphereState, outage !== null),
			ports: ports
				.filter((p) => p.boxId === box.id)
				.map((p) => ({
					id: p.id,
					position: p.position,
					diameterMm: p.diameterMm,
					gloveState: stateOf(p.id)
				})),
			requiredModules: required
				.filter((r) => r.boxId === box.id)
				.map((r) => ({ id: r.id, name: r.name })),
			latestReading: reading && { at: reading.at, o2Ppm: reading.o2Ppm, h2oPpm: reading.h2oPpm },
			currentOutage: outage && {
				id: outage.id,
				endAt: outage.endAt,
				reason: outage.reason,
				kind: outage.kind
			}
		};
	});
}

export async function listBoxes(): Promise<BoxSummary[]> {
	return summarise(await db.select().from(boxes).orderBy(asc(boxes.name)));
}

export async function getBox(id: number): Promise<{ box: Box; summary: BoxSummary }> {
	const [box] = await db.select().from(boxes).where(eq(boxes.id, id));
	if (!box) throw notFound('The box');
	const [summary] = await summarise([box]);
	return { box, summary };
}

/** The box page's outages: planned ones first, then back in time, a page at a time. */
export const boxOutagesList = {
	prefix: 'outages',
	sorts: ['start'],
	defaultSort: 'start',
	defaultDir: 'desc',
	perPage: 10
} as const satisfies ListSpec;

/** One page of a box's outages with the total, so older ones are paged to, never cut off. */
export async function boxOutages(boxId: number, query: ListQuery<'start'>) {
	const where = eq(outages.boxId, boxId);
	return pageInSql(
		query,
		async () => (await db.select({ n: count() }).from(outages).where(where))[0].n,
		(limit, offset) =>
			db
				.select()
				.from(outages)
				.where(where)
				.orderBy(...orderOf(query, { start: outages.startAt }, outages.id))
				.limit(limit)
				.offset(offset)
	);
}

/**
 * The box's ports as the form lists them, kept by id: a listed port is updated in place
 * (its gloves, inspections and glove changes stay with it), a port without an id is added,
 * and only a port no longer listed is deleted, with its gloves' records. A port with a
 * glove change under way is not removed: the change would lose its port.
 */
async function writePorts(tx: Transaction, boxId: number, ports: BoxInput['ports']) {
	const existing = await tx
		.select({ id: boxPorts.id, position: boxPorts.position })
		.from(boxPorts)
		.where(eq(boxPorts.boxId, boxId));
	const known = new Set(existing.map((p) => p.id));
	if (ports.some((p) => p.id !== undefined && !known.has(p.id))) {
		const message = 'A port in the list is not on this box; reload the page and try again.';
		throw new ServiceError(409, message, { fields: { ports: message } });
	}
	const listed = new Set(ports.map((p) => p.id));
	const removed = existing.filter((p) => !listed.has(p.id));
	if (removed.length) {
		const [open] = await tx
			.select({ portId: gloveChanges.portId })
			.from(gloveChanges)
			.where(
				and(
					inArray(
						gloveChanges.portId,
						removed.map((p) => p.id)
					),
					eq(gloveChanges.status, 'open')
				)
			)
			.limit(1);
		if (open) {
			const position = removed.find((p) => p.id === open.portId)?.position ?? 'a';
			const message = `A glove change is under way on the ${position} port: complete or abandon it before removing the port.`;
			throw new ServiceError(409, message, { fields: { ports: message } });
		}
		await tx.delete(boxPorts).where(
			inArray(
				boxPorts.id,
				removed.map((p) => p.id)
			)
		);
	}
	for (const [sortOrder, p] of ports.entries()) {
		if (p.id === undefined) continue;
		await tx
			.update(boxPorts)
			.set({ position: p.position, diameterMm: p.diameterMm, sortOrder })
			.where(and(eq(boxPorts.id, p.id), eq(boxPorts.boxId, boxId)));
	}
	const added = [...ports.entries()].filter(([, p]) => p.id === undefined);
	if (added.length) {
		await tx.insert(boxPorts).values(
			added.map(([sortOrder, p]) => ({
				boxId,
				position: p.position,
				diameterMm: p.diameterMm,
				sortOrder
			}))
		);
	}
	return removed.map((p) => p.position);
}

/** The ports an edit would remove that have a glove fitted: their records go with them. */
export async function portsLosingGloves(boxId: number, ports: BoxInput['ports']) {
	const listed = new Set(ports.map((p) => p.id));
	const rows = await db
		.select({ id: boxPorts.id, position: boxPorts.position, gloveId: gloves.id })
		.from(boxPorts)
		.leftJoin(gloves, and(eq(gloves.portId, boxPorts.id), isNull(gloves.removedAt)))
		.where(eq(boxPorts.boxId, boxId))
		.orderBy(asc(boxPorts.sortOrder), asc(boxPorts.id));
	return rows
		.filter((r) => !listed.has(r.id))
		.map((r) => ({ position: r.position, glove: r.gloveId !== null }));
}

async function writeParts(tx: Transaction, boxId: number, input: BoxInput) {
	const removedPorts = await writePorts(tx, boxId, input.ports);
	await tx.delete(boxRequiredModules).where(eq(boxRequiredModules.boxId, boxId));
	if (input.requiredModuleIds.length) {
		const known = await tx
			.select({ id: trainingModules.id })
			.from(trainingModules)
			.where(inArray(trainingModules.id, input.requiredModuleIds));
		if (known.length !== new Set(input.requiredModuleIds).size) {
			const message = 'Choose training modules from the list.';
			throw new ServiceError(400, message, { fields: { requiredModuleIds: message } });
		}
		await tx
			.insert(boxRequiredModules)
			.values([...new Set(input.requiredModuleIds)].map((moduleId) => ({ boxId, moduleId })));
	}
	return removedPorts;
}

function columns(input: BoxInput) {
	const { ports, requiredModuleIds, ...rest } = input;
	return rest;
}

function duplicateName(): ServiceError {
	const message = 'Another box already has this name.';
	return new ServiceError(409, message, { fields: { name: message } });
}

export async function createBox(actor: Actor, input: BoxInput): Promise<number> {
	try {
		return await transaction(async (tx) => {
			const [created] = await tx.insert(boxes).values(columns(input)).$returningId();
			await writeParts(tx, created.id, input);
			await audit(tx, {
				actorId: actor.id,
				action: 'box.created',
				entity: 'box',
				entityId: created.id,
				details: { name: input.name }
			});
			return created.id;
		});
	} catch (e) {
		if (isDuplicateKey(e)) throw duplicateName();
		throw e;
	}
}

export async function updateBox(actor: Actor, id: number, input: BoxInput): Promise<void> {
	try {
		await transaction(async (tx) => {
			await lockBox(tx, id);
			await tx.update(boxes).set(columns(input)).where(eq(boxes.id, id));
			const removedPorts = await writeParts(tx, id, input);
			await audit(tx, {
				actorId: actor.id,
				action: 'box.updated',
				entity: 'box',
				entityId: id,
				details: removedPorts.length ? { removedPorts } : undefined
			});
			// New warn or alarm levels may put the box into alarm or take it out at once.
			await resettle(tx, id, actor.id);
		});
	} catch (e) {
		if (isDuplicateKey(e)) throw duplicateName();
		throw e;
	}
}

export async function boxExists(id: number): Promise<boolean> {
	const [row] = await db.select({ id: boxes.id }).from(boxes).where(eq(boxes.id, id));
	return Boolean(row);
}
