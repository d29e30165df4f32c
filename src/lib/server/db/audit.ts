import { bigint, datetime, index, int, mysqlTable, varchar } from 'drizzle-orm/mysql-core';
import { sql } from 'drizzle-orm';
import { json } from './types';

/** Who did what, when, to which record. Rows are only ever inserted. */
export const auditLog = mysqlTable(
	'audit_log',
	{
		id: bigint({ mode: 'number' }).autoincrement().primaryKey(),
		at: datetime({ mode: 'date', fsp: 3 })
			.notNull()
			.default(sql`CURRENT_TIMESTAMP(3)`),
		actorId: int(),
		action: varchar({ length: 60 }).notNull(),
		entity: varchar({ length: 40 }).notNull(),
		entityId: varchar({ length: 64 }).notNull(),
		details: json()
	},
	(t) => [
		index('audit_log_entity_idx').on(t.entity, t.entityId),
		index('audit_log_at_idx').on(t.at)
	]
);
