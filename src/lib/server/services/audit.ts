import { and, asc, desc, eq, gte, lt } from 'drizzle-orm';
import { DateTime } from 'luxon';
import { config } from '../config';
import { db, type Transaction } from '../db';
import type { Database } from '../db/connect';
import { auditLog, users } from '../db/schema';

export type AuditEntry = {
	actorId: number | null;
	action: string;
	entity: string;
	entityId: string | number;
	details?: Record<string, unknown>;
};

/** Records an action; pass the transaction so the entry commits with the change. */
export async function audit(tx: Database | Transaction, entry: AuditEntry) {
	await tx.insert(auditLog).values({
		actorId: entry.actorId,
		action: entry.action,
		entity: entry.entity,
		entityId: String(entry.entityId),
		details: entry.details ?? null
	});
}

export const AUDIT_PAGE_SIZE = 50;

export type AuditFilter = {
	actorId?: number;
	entity?: string;
	entityId?: string;
	/** Calendar days (YYYY-MM-DD) on the facility's clock, both included. */
	from?: string;
	to?: string;
	page: number;
};

export type AuditRow = {
	id: number;
	at: Date;
	actorId: number | null;
	actorName: string | null;
	action: string;
	entity: string;
	entityId: string;
	details: unknown;
};

/** The first instant of a calendar day on the facility's clock, `plus` days later. */
const dayStart = (day: string, plus = 0) =>
	DateTime.fromISO(day, { zone: config.facilityTz }).plus({ days: plus }).startOf('day').toJSDate();

/**
 * One page of the audit log, newest first, filtered by who acted, which record and which
 * days. One row more than a page is read to know whether an older page exists, so no COUNT
 * runs over the whole log.
 */
export async function auditEntries(
	filter: AuditFilter
): Promise<{ rows: AuditRow[]; hasOlder: boolean }> {
	const where = [
		filter.actorId ? eq(auditLog.actorId, filter.actorId) : undefined,
		filter.entity ? eq(auditLog.entity, filter.entity) : undefined,
		filter.entityId ? eq(auditLog.entityId, filter.entityId) : undefined,
		filter.from ? gte(auditLog.at, dayStart(filter.from)) : undefined,
		// The last day counts whole: up to the midnight after it.
		filter.to ? lt(auditLog.at, dayStart(filter.to, 1)) : undefined
	];
	const rows = await db
		.select({
			id: auditLog.id,
			at: auditLog.at,
			actorId: auditLog.actorId,
			actorName: users.name,
			action: auditLog.action,
			entity: auditLog.entity,
			entityId: auditLog.entityId,
			details: auditLog.details
		})
		.from(auditLog)
		.leftJoin(users, eq(users.id, auditLog.actorId))
		.where(and(...where))
		.orderBy(desc(auditLog.at), desc(auditLog.id))
		.limit(AUDIT_PAGE_SIZE + 1)
		.offset((filter.page - 1) * AUDIT_PAGE_SIZE);
	return { rows: rows.slice(0, AUDIT_PAGE_SIZE), hasOlder: rows.length > AUDIT_PAGE_SIZE };
}

/** The kinds of record the log holds, for the filter (a loose scan of its entity index). */
export async function auditEntities(): Promise<string[]> {
	const rows = await db
		.selectDistinct({ entity: auditLog.entity })
		.from(auditLog)
		.orderBy(asc(auditLog.entity));
	return rows.map((r) => r.entity);
}

/** Everyone who could have acted, for the person filter. */
export async function auditPeople() {
	return db
		.select({ id: users.id, name: users.name, email: users.email })
		.from(users)
		.orderBy(asc(users.name), asc(users.id));
}
