import { char, datetime, int, mysqlTable, primaryKey } from 'drizzle-orm/mysql-core';
import { json } from './types';
import { researchGroups } from './groups';
import { users } from './users';

/** Months a manager has closed: their statements are read from the snapshots below. */
export const closedMonths = mysqlTable('closed_months', {
	month: char({ length: 7 }).primaryKey(),
	closedBy: int().references(() => users.id, { onDelete: 'set null' }),
	closedAt: datetime({ mode: 'date' }).notNull()
});

/** A group's statement for a closed month, exactly as it stood when the month was closed. */
export const statementSnapshots = mysqlTable(
	'statement_snapshots',
	{
		month: char({ length: 7 })
			.notNull()
			.references(() => closedMonths.month, { onDelete: 'cascade' }),
		groupId: int()
			.notNull()
			.references(() => researchGroups.id, { onDelete: 'cascade' }),
		// domain/usage.ts's Statement: money in integer cents, with its currency. Older rows
		// hold `rate` and `amount` in units and no currency; statementFromSnapshot reads both.
		statement: json().$type<unknown>().notNull()
	},
	(t) => [primaryKey({ columns: [t.month, t.groupId] })]
);
