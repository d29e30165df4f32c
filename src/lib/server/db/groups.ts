import {
	boolean,
	datetime,
	int,
	mysqlEnum,
	mysqlTable,
	uniqueIndex,
	varchar
} from 'drizzle-orm/mysql-core';
import { sql } from 'drizzle-orm';
import { users } from './users';

// `groups` is a reserved word in some MySQL versions, hence research_groups.
export const researchGroups = mysqlTable('research_groups', {
	id: int().autoincrement().primaryKey(),
	name: varchar({ length: 120 }).notNull().unique(),
	piUserId: int().references(() => users.id, { onDelete: 'set null' }),
	costCentre: varchar({ length: 40 }).notNull(),
	/** Billed at the boxes' external rates (another institution or a company). */
	external: boolean().notNull().default(false),
	createdAt: datetime({ mode: 'date' })
		.notNull()
		.default(sql`CURRENT_TIMESTAMP`)
});

export const membershipStatuses = ['pending', 'active', 'removed'] as const;
export type MembershipStatus = (typeof membershipStatuses)[number];

export const groupMemberships = mysqlTable(
	'group_memberships',
	{
		id: int().autoincrement().primaryKey(),
		groupId: int()
			.notNull()
			.references(() => researchGroups.id, { onDelete: 'cascade' }),
		userId: int()
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		status: mysqlEnum(membershipStatuses).notNull().default('pending'),
		requestedAt: datetime({ mode: 'date' })
			.notNull()
			.default(sql`CURRENT_TIMESTAMP`),
		decidedAt: datetime({ mode: 'date' }),
		decidedBy: int()
	},
	(t) => [uniqueIndex('group_memberships_group_user_uq').on(t.groupId, t.userId)]
);

export type ResearchGroup = typeof researchGroups.$inferSelect;
