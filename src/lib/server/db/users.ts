import {
	boolean,
	char,
	datetime,
	index,
	int,
	mysqlEnum,
	mysqlTable,
	varchar
} from 'drizzle-orm/mysql-core';
import { sql } from 'drizzle-orm';

import { roles } from '../../domain/roles';
export type { Role } from '../../domain/roles';

/**
 * pending: registered, waiting for a PI or manager; invited: asked by an admin, no password
 * yet; active; suspended: may not sign in (deactivated by an admin).
 */
export const userStatuses = ['pending', 'invited', 'active', 'suspended'] as const;
export type UserStatus = (typeof userStatuses)[number];

export const users = mysqlTable('users', {
	id: int().autoincrement().primaryKey(),
	email: varchar({ length: 254 }).notNull().unique(),
	name: varchar({ length: 120 }).notNull(),
	passwordHash: varchar({ length: 255 }).notNull(),
	role: mysqlEnum(roles).notNull().default('member'),
	status: mysqlEnum(userStatuses).notNull().default('pending'),
	createdAt: datetime({ mode: 'date' })
		.notNull()
		.default(sql`CURRENT_TIMESTAMP`),
	approvedAt: datetime({ mode: 'date' }),
	approvedBy: int(),
	/** SHA-256 of the calendar feed token; the token itself is shown once and never kept. */
	feedTokenHash: varchar({ length: 64 }).unique(),
	feedTokenCreatedAt: datetime({ mode: 'date' }),
	/** E-mail when a booking is made or approved; cancellations are always sent. */
	emailConfirmations: boolean().notNull().default(true),
	/** Raised by db/locks.ts lockUser: the person's lock as a write a Galera cluster certifies. */
	lockVersion: int().notNull().default(0)
});

/** Lucia sessions. `id` is the SHA-256 of the cookie's token, so a leaked table opens nothing. */
export const sessions = mysqlTable(
	'sessions',
	{
		id: varchar({ length: 64 }).primaryKey(),
		userId: int()
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		expiresAt: datetime({ mode: 'date' }).notNull()
	},
	(t) => [index('sessions_user_idx').on(t.userId)]
);

/**
 * Single-use links sent by e-mail: a password reset, or an invitation to set one. Only the
 * token's SHA-256 is kept.
 */
export const accountTokens = mysqlTable(
	'account_tokens',
	{
		id: int().autoincrement().primaryKey(),
		userId: int()
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		kind: mysqlEnum(['reset', 'invite']).notNull(),
		tokenHash: char({ length: 64 }).notNull().unique(),
		expiresAt: datetime({ mode: 'date' }).notNull(),
		usedAt: datetime({ mode: 'date' }),
		createdBy: int(),
		createdAt: datetime({ mode: 'date' })
			.notNull()
			.default(sql`CURRENT_TIMESTAMP`)
	},
	(t) => [index('account_tokens_user_idx').on(t.userId, t.kind)]
);

export type User = typeof users.$inferSelect;
