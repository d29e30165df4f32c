// The manager's reports over whole ISO weeks: the rows are read here, bounded by the range
// on indexed columns; the interval arithmetic is in $lib/domain/reports.
import { and, asc, eq, gt, gte, inArray, isNull, lt, lte, or } from 'drizzle-orm';
import type { Gas } from '$lib/domain/boxes';
import { outageKindLabel, type OutageKind } from '$lib/domain/bookings';
import type { GloveMaterial } from '$lib/domain/gloves';
import {
	WEAR_STATUSES,
	bookingRates,
	gloveWear,
	hoursByGroup,
	outageHoursByKind,
	utilisation,
	weeksCovering,
	type GloveWear,
	type GroupHours,
	type RateCounts,
	type ReportBooking,
	type Utilisation,
	type Week
} from '$lib/domain/reports';
import { config } from '../config';
import { db } from '../db';
import { startsFrom } from '../db/queries';
import {
	bookings,
	boxes,
	boxPorts,
	gloveInspections,
	gloves,
	maintenanceLog,
	maintenanceTasks,
	outages,
	researchGroups
} from '../db/schema';

export type ReportBoxInfo = { id: number; name: string; gas: Gas };

export type FacilityReport = {
	tz: string;
	/** The range as reported: whole ISO weeks in the facility zone. */
	from: Date;
	to: Date;
	now: Date;
	weeks: (Week & { current: boolean })[];
	boxes: ReportBoxInfo[];
	utilisation: Utilisation[];
	/** By billed hours, most first; groupId null is bookings billed to no group. */
	groups: (GroupHours & { name: string })[];
	rates: { byBox: (RateCounts & { boxId: number })[]; overall: RateCounts };
	outages: {
		kind: OutageKind;
		label: string;
		hours: number;
		byBox: { boxId: number; hours: number }[];
	}[];
	/** Every port, with its fitted glove and that glove's wear (null when none is fitted). */
	gloves: {
		boxId: number;
		portId: number;
		position: string;
		glove: { id: number; material: GloveMaterial; size: string; installedAt: Date } | null;
		wear: GloveWear | null;
	}[];
};

/**
 * Everything the reports page shows for [from, to), widened to whole ISO weeks in the
 * facility zone. Booking and outage figures cover the range; glove wear is as of `now`.
 */
export async function facilityReport(
	range: { from: Date; to: Date },
	now = new Date()
): Promise<FacilityReport> {
	const tz = config.facilityTz;
	const weeks = weeksCovering(range.from, range.to, tz);
	if (!weeks.length) throw new Error('The report range is empty.');
	const from = weeks[0].start;
	const to = weeks[weeks.length - 1].end;

	const boxRows = await db
		.select({
			id: boxes.id,
			name: boxes.name,
			gas: boxes.gas,
			cancelWindowHours: boxes.cancelWindowHours
		})
		.from(boxes)
		.orderBy(asc(boxes.name));
	const boxIds = boxRows.map((b) => b.id);
	const current = weeks.find((w) => w.start <= now && now < w.end)?.key;
	const empty: FacilityReport = {
		tz,
		from,
		to,
		now,
		weeks: weeks.map((w) => ({ ...w, current: w.key === current })),
		boxes: [],
		utilisation: [],
		groups: [],
		rates: bookingRates([], [], { from, to }, now),
		outages: [],
		gloves: []
	};
	if (!boxIds.length) return empty;

	const [bookingRows, outageRows, fitted] = await Promise.all([
		// A range scan on (box_id, start_at) per box, bounded on both sides.
		db
			.select({
				boxId: bookings.boxId,
				groupId: bookings.groupId,
				startAt: bookings.startAt,
				endAt: bookings.endAt,
				status: bookings.status,
				cancelCause: bookings.cancelCause,
				cancelledAt: bookings.cancelledAt,
				confirmedAt: bookings.confirmedAt,
				heldUntil: bookings.blockedUntil
			})
			.from(bookings)
			.where(
				and(
					inArray(bookings.boxId, boxIds),
					startsFrom(from),
					lt(bookings.startAt, to),
					gt(bookings.endAt, from)
				)
			),
		// Outages have no longest length, so only their start is bounded above; they are few.
		db
			.select({
				boxId: outages.boxId,
				kind: outages.kind,
				startAt: outages.startAt,
				endAt: outages.endAt
			})
			.from(outages)
			.where(and(inArray(outages.boxId, boxIds), lt(outages.startAt, to), gt(outages.endAt, from))),
		db
			.select({
				boxId: boxPorts.boxId,
				portId: boxPorts.id,
				position: boxPorts.position,
				gloveId: gloves.id,
				material: gloves.material,
				size: gloves.size,
				installedAt: gloves.installedAt
			})
			.from(boxPorts)
			.leftJoin(gloves, and(eq(gloves.portId, boxPorts.id), isNull(gloves.removedAt)))
			.where(inArray(boxPorts.boxId, boxIds))
			.orderBy(asc(boxPorts.boxId), asc(boxPorts.sortOrder), asc(boxPorts.id))
	]);

	const list: ReportBooking[] = bookingRows;
	const groupIds = [...new Set(list.map((b) => b.groupId).filter((id) => id !== null))];
	const [groupRows, wear] = await Promise.all([
		groupIds.length
			? db
					.select({ id: researchGroups.id, name: researchGroups.name })
					.from(researchGroups)
					.where(inArray(researchGroups.id, groupIds))
			: Promise.resolve([]),
		wearOf(fitted, now)
	]);

	const groupName = new Map(groupRows.map((g) => [g.id, g.name]));
	const byKind = outageHoursByKind(outageRows, boxIds, { from, to });
	return {
		...empty,
		boxes: boxRows.map((b) => ({ id: b.id, name: b.name, gas: b.gas })),
		utilisation: utilisation(boxIds, list, outageRows, weeks, tz),
		groups: hoursByGroup(list, boxRows, { from, to }).map((g) => ({
			...g,
			name: g.groupId === null ? 'No group' : (groupName.get(g.groupId) ?? `Group ${g.groupId}`)
		})),
		rates: bookingRates(list, boxRows, { from, to }, now),
		outages: byKind.map((k) => ({ ...k, label: outageKindLabel[k.kind] })),
		gloves: byBoxName(fitted, boxIds).map((p) => ({
			boxId: p.boxId,
			portId: p.portId,
			position: p.position,
			glove:
				p.gloveId !== null && p.material !== null && p.installedAt !== null
					? { id: p.gloveId, material: p.material, size: p.size ?? '', installedAt: p.installedAt }
					: null,
			wear: p.gloveId !== null ? (wear.get(p.gloveId) ?? null) : null
		}))
	};
}

type FittedRow = {
	boxId: number;
	gloveId: number | null;
	installedAt: Date | null;
};

/**
 * Wear of each fitted glove as of `now`: its inspections, the glove checks logged on its box
 * (glove-inspection maintenance tasks done, which go over every glove there), and the worn
 * bookings on its box since the oldest glove there was fitted — one (box_id, start_at) range
 * per box.
 */
async function wearOf(rows: FittedRow[], now: Date): Promise<Map<number, GloveWear>> {
	const fitted = rows.filter(
		(r): r is FittedRow & { gloveId: number; installedAt: Date } =>
			r.gloveId !== null && r.installedAt !== null
	);
	if (!fitted.length) return new Map();
	const oldest = new Map<number, Date>();
	for (const g of fitted) {
		const seen = oldest.get(g.boxId);
		if (!seen || g.installedAt < seen) oldest.set(g.boxId, g.installedAt);
	}
	const [inspections, boxChecks, worn] = await Promise.all([
		db
			.select({
				gloveId: gloveInspections.gloveId,
				at: gloveInspections.at,
				damaged: gloveInspections.damaged,
				action: gloveInspections.action
			})
			.from(gloveInspections)
			.where(
				inArray(
					gloveInspections.gloveId,
					fitted.map((g) => g.gloveId)
				)
			),
		db
			.select({ boxId: maintenanceTasks.boxId, at: maintenanceLog.doneAt })
			.from(maintenanceLog)
			.innerJoin(maintenanceTasks, eq(maintenanceTasks.id, maintenanceLog.taskId))
			.where(
				and(
					eq(maintenanceTasks.kind, 'glove_inspection'),
					or(
						...[...oldest].map(([boxId, since]) =>
							and(eq(maintenanceTasks.boxId, boxId), gte(maintenanceLog.doneAt, since))
						)
					),
					lte(maintenanceLog.doneAt, now)
				)
			),
		db
			.select({
				boxId: bookings.boxId,
				startAt: bookings.startAt,
				endAt: bookings.endAt,
				status: bookings.status
			})
			.from(bookings)
			.where(
				and(
					or(
						...[...oldest].map(([boxId, since]) =>
							and(eq(bookings.boxId, boxId), startsFrom(since))
						)
					),
					lt(bookings.startAt, now),
					inArray(bookings.status, [...WEAR_STATUSES])
				)
			)
	]);
	const onBox = groupBy(worn, (b) => b.boxId);
	const ofGlove = groupBy(inspections, (i) => i.gloveId);
	const checksOn = groupBy(boxChecks, (c) => c.boxId);
	return new Map(
		fitted.map((g) => [
			g.gloveId,
			gloveWear({
				installedAt: g.installedAt,
				inspections: ofGlove.get(g.gloveId) ?? [],
				boxChecks: (checksOn.get(g.boxId) ?? []).map((c) => c.at),
				bookings: onBox.get(g.boxId) ?? [],
				now
			})
		])
	);
}

/** Rows in the order of `boxIds` (by box name), each box's ports in their own order. */
function byBoxName<T extends { boxId: number }>(rows: T[], boxIds: number[]): T[] {
	const rank = new Map(boxIds.map((id, i) => [id, i]));
	return rows
		.map((row, i) => ({ row, i }))
		.sort((a, b) => rank.get(a.row.boxId)! - rank.get(b.row.boxId)! || a.i - b.i)
		.map((x) => x.row);
}

// Map.groupBy arrives in Node 21; the app runs on Node 20.
function groupBy<T, K>(list: T[], key: (item: T) => K): Map<K, T[]> {
	const map = new Map<K, T[]>();
	for (const item of list) {
		const k = key(item);
		const group = map.get(k);
		if (group) group.push(item);
		else map.set(k, [item]);
	}
	return map;
}
