// The dashboard's reads, one statement each: the person (their first group, the groups they
// lead, the failed messages a manager sees), every box with what its card shows, and every
// training module with where the person stands in it. What is a list inside a row (a box's
// ports, a module's trainers) comes back as JSON from a correlated subquery; the rules that
// decide from it (boxCondition, gloveState, isDamaged, standing) stay in the domain.
import { and, asc, count, desc, eq, sql } from 'drizzle-orm';
import { alias } from 'drizzle-orm/mysql-core';
import { boxCondition, type BoxCondition } from '$lib/domain/boxes';
import { certificationState, standing } from '$lib/domain/certifications';
import { gloveState, isDamaged } from '$lib/domain/gloves';
import { hasRole, roles } from '$lib/domain/roles';
import { db } from '../db';
import { defaultGroupId } from '../db/queries';
import {
	atmosphereReadings,
	boxes,
	certifications,
	outages,
	outbox,
	researchGroups,
	trainingModules,
	trainingRequests,
	users
} from '../db/schema';
import type { BoxSummary } from './boxes';

/** JSON from a subquery: MariaDB sends it as text (no JSON column type); NULL for no rows. */
function fromJson<T>(value: unknown): T[] {
	if (value === null || value === undefined) return [];
	return (typeof value === 'string' ? JSON.parse(value) : value) as T[];
}

/** DATETIME inside JSON is "YYYY-MM-DD hh:mm:ss" text, in UTC like every stored time. */
const utc = (value: string | null) => (value ? new Date(`${value.replace(' ', 'T')}Z`) : null);

/** Roles that may teach: a module's trainers are counted only while they hold one. */
const teaching = roles.filter((r) => hasRole(r, 'trainer'));

/** Messages that could not be sent for good: the manager's warning. */
export const failedQuery = () =>
	db.select({ n: count() }).from(outbox).where(eq(outbox.status, 'failed'));

export type LedGroup = { id: number; name: string; external: boolean };

/**
 * The person's first group (the one bookings are billed to) and whether they lead it, every
 * group they lead, and for a manager how many messages failed for good.
 */
export async function aboutMe(userId: number, manager: boolean) {
	const [row] = await db
		.select({
			groupName: researchGroups.name,
			groupPi: researchGroups.piUserId,
			led: sql<unknown>`(SELECT JSON_ARRAYAGG(JSON_OBJECT('id', rg.id, 'name', rg.name,
				'external', rg.external) ORDER BY rg.name) FROM research_groups rg
				WHERE rg.pi_user_id = ${userId})`,
			failed: manager ? sql`${failedQuery()}`.mapWith(Number) : sql`0`.mapWith(Number)
		})
		.from(users)
		.leftJoin(researchGroups, eq(researchGroups.id, defaultGroupId(userId)))
		.where(eq(users.id, userId));
	const led = fromJson<{ id: number; name: string; external: unknown }>(row?.led);
	return {
		group: row?.groupName ? { name: row.groupName, isPi: row.groupPi === userId } : null,
		led: led.map((g): LedGroup => ({ id: g.id, name: g.name, external: Boolean(g.external) })),
		failed: row?.failed ?? 0
	};
}

type PortJson = {
	id: number;
	position: string;
	diameterMm: number;
	installedAt: string | null;
	/** The status of the port's newest glove change, if it had one. */
	change: string | null;
	/** The actions of the fitted glove's damage reports. */
	damage: string[] | null;
};

/**
 * Every box as its card and the dashboard's warnings show it (the shape of listBoxes): its
 * newest reading, the outage under way that ends last, the
 * modules it requires, and each port's fitted glove with its damage reports and the state of
 * the port's newest glove change.
 */
export async function boxSummaries(now = new Date()): Promise<BoxSummary[]> {
	const reading = alias(atmosphereReadings, 'r');
	const outage = alias(outages, 'o');
	const rows = await db
		.select({
			id: boxes.id,
			name: boxes.name,
			room: boxes.room,
			gas: boxes.gas,
			volumeL: boxes.volumeL,
			status: boxes.status,
			atmosphereState: boxes.atmosphereState,
			readingAt: reading.at,
			o2Ppm: reading.o2Ppm,
			h2oPpm: reading.h2oPpm,
			outageId: outage.id,
			outageEnd: outage.endAt,
			outageReason: outage.reason,
			outageKind: outage.kind,
			required: sql<unknown>`(SELECT JSON_ARRAYAGG(JSON_OBJECT('id', tm.id, 'name', tm.name)
				ORDER BY tm.name) FROM box_required_modules brm
				JOIN training_modules tm ON tm.id = brm.module_id WHERE brm.box_id = boxes.id)`,
			ports: sql<unknown>`(SELECT JSON_ARRAYAGG(JSON_OBJECT('id', p.id, 'position', p.position,
				'diameterMm', p.diameter_mm, 'installedAt', g.installed_at,
				'change', (SELECT gc.status FROM glove_changes gc WHERE gc.port_id = p.id
					ORDER BY gc.id DESC LIMIT 1),
				'damage', (SELECT JSON_ARRAYAGG(gi.action) FROM glove_inspections gi
					WHERE gi.glove_id = g.id AND gi.damaged = 1)) ORDER BY p.sort_order, p.id)
				FROM box_ports p LEFT JOIN gloves g ON g.id = (SELECT g2.id FROM gloves g2
					WHERE g2.port_id = p.id AND g2.removed_at IS NULL ORDER BY g2.id LIMIT 1)
				WHERE p.box_id = boxes.id)`
		})
		.from(boxes)
		// The newest first down the (box_id, at) index: one entry per box. (A correlated MAX(at)
		// reads every reading of the box in the index instead.)
		.leftJoin(
			reading,
			sql`${reading.id} = (SELECT ar.id FROM atmosphere_readings ar WHERE ar.box_id = boxes.id
				ORDER BY ar.at DESC LIMIT 1)`
		)
		.leftJoin(
			outage,
			sql`${outage.id} = (SELECT ou.id FROM outages ou WHERE ou.box_id = boxes.id
				AND ou.start_at <= ${now} AND ou.end_at > ${now} ORDER BY ou.end_at DESC, ou.id LIMIT 1)`
		)
		.orderBy(asc(boxes.name));
	return rows.map((b) => {
		const current =
			b.outageId !== null && b.outageEnd && b.outageReason !== null && b.outageKind
				? { id: b.outageId, endAt: b.outageEnd, reason: b.outageReason, kind: b.outageKind }
				: null;
		const condition: BoxCondition = boxCondition(b.status, b.atmosphereState, current !== null);
		return {
			id: b.id,
			name: b.name,
			room: b.room,
			gas: b.gas,
			volumeL: b.volumeL,
			status: b.status,
			atmosphereState: b.atmosphereState,
			condition,
			ports: fromJson<PortJson>(b.ports).map((p) => {
				const installedAt = utc(p.installedAt);
				return {
					id: p.id,
					position: p.position,
					diameterMm: p.diameterMm,
					gloveState: gloveState({
						installedAt,
						damaged:
							installedAt !== null &&
							isDamaged((p.damage ?? []).map((action) => ({ damaged: true, action }))),
						changeUnderWay: (p.change ?? 'completed') !== 'completed',
						now
					})
				};
			}),
			requiredModules: fromJson<{ id: number; name: string }>(b.required),
			latestReading:
				b.readingAt && b.o2Ppm !== null && b.h2oPpm !== null
					? { at: b.readingAt, o2Ppm: b.o2Ppm, h2oPpm: b.h2oPpm }
					: null,
			currentOutage: current
		};
	});
}

/**
 * Where the person stands in every module (by name), with what a newcomer's way to a first
 * booking names: who teaches it now (active trainers or above, by name), the modules it
 * needs first, and when the person asked for it (their open request).
 */
export async function moduleStandings(userId: number, now = new Date()) {
	const rows = await db
		.select({
			moduleId: trainingModules.id,
			moduleName: trainingModules.name,
			certificationId: certifications.id,
			grantedAt: certifications.grantedAt,
			expiresAt: certifications.expiresAt,
			revokedAt: certifications.revokedAt,
			trainers: sql<unknown>`(SELECT JSON_ARRAYAGG(u.name ORDER BY u.name)
				FROM module_trainers mt JOIN users u ON u.id = mt.user_id
				WHERE mt.module_id = training_modules.id AND u.status = 'active'
				AND u.role IN (${sql.join(
					teaching.map((r) => sql`${r}`),
					sql`, `
				)}))`,
			prerequisites: sql<unknown>`(SELECT JSON_ARRAYAGG(mp.requires_module_id)
				FROM module_prerequisites mp WHERE mp.module_id = training_modules.id)`,
			requestedAt: sql<Date | null>`(SELECT MIN(tr.created_at) FROM training_requests tr
				WHERE tr.user_id = ${userId} AND tr.module_id = training_modules.id
				AND tr.status = 'open')`.mapWith(trainingRequests.createdAt)
		})
		.from(trainingModules)
		.leftJoin(
			certifications,
			and(eq(certifications.moduleId, trainingModules.id), eq(certifications.userId, userId))
		)
		.orderBy(asc(trainingModules.name), desc(certifications.grantedAt), desc(certifications.id));
	const modules = new Map<number, (typeof rows)[number][]>();
	for (const r of rows) modules.set(r.moduleId, [...(modules.get(r.moduleId) ?? []), r]);
	return [...modules.values()].map((grants) => {
		const m = grants[0];
		const certs = grants.flatMap((g) =>
			g.certificationId !== null && g.grantedAt && g.expiresAt
				? [{ grantedAt: g.grantedAt, expiresAt: g.expiresAt, revokedAt: g.revokedAt }]
				: []
		);
		const cert = standing(certs, now);
		return {
			moduleId: m.moduleId,
			moduleName: m.moduleName,
			state: certificationState(cert, now),
			expiresAt: cert?.expiresAt ?? null,
			trainers: fromJson<string>(m.trainers),
			prerequisiteIds: fromJson<number>(m.prerequisites),
			requestedAt: m.requestedAt
		};
	});
}
