import {
	datetime,
	mysqlEnum,
	index,
	int,
	mysqlTable,
	primaryKey,
	smallint,
	text,
	varchar
} from 'drizzle-orm/mysql-core';
import { sql } from 'drizzle-orm';
import { users } from './users';

export const trainingModules = mysqlTable('training_modules', {
	id: int().autoincrement().primaryKey(),
	name: varchar({ length: 120 }).notNull().unique(),
	description: text(),
	validityMonths: smallint().notNull(),
	createdAt: datetime({ mode: 'date' })
		.notNull()
		.default(sql`CURRENT_TIMESTAMP`)
});

export const modulePrerequisites = mysqlTable(
	'module_prerequisites',
	{
		moduleId: int()
			.notNull()
			.references(() => trainingModules.id, { onDelete: 'cascade' }),
		requiresModuleId: int()
			.notNull()
			.references(() => trainingModules.id, { onDelete: 'cascade' })
	},
	(t) => [primaryKey({ columns: [t.moduleId, t.requiresModuleId] })]
);

/** Which trainers teach (and so may certify for) which modules. Managers may certify any. */
export const moduleTrainers = mysqlTable(
	'module_trainers',
	{
		moduleId: int()
			.notNull()
			.references(() => trainingModules.id, { onDelete: 'cascade' }),
		userId: int()
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' })
	},
	(t) => [primaryKey({ columns: [t.moduleId, t.userId] })]
);

/** One row per grant; a revoked row stays for the record. */
export const certifications = mysqlTable(
	'certifications',
	{
		id: int().autoincrement().primaryKey(),
		userId: int()
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		moduleId: int()
			.notNull()
			.references(() => trainingModules.id, { onDelete: 'cascade' }),
		grantedAt: datetime({ mode: 'date' }).notNull(),
		expiresAt: datetime({ mode: 'date' }).notNull(),
		grantedBy: int().references(() => users.id, { onDelete: 'set null' }),
		note: varchar({ length: 500 }),
		revokedAt: datetime({ mode: 'date' }),
		revokedBy: int(),
		revokeReason: varchar({ length: 500 })
	},
	(t) => [index('certifications_user_module_idx').on(t.userId, t.moduleId)]
);

export type TrainingModule = typeof trainingModules.$inferSelect;

export const trainingRequestStatuses = ['open', 'granted', 'declined', 'withdrawn'] as const;

/** A person asking to be trained in a module; its trainers are told and decide. */
export const trainingRequests = mysqlTable(
	'training_requests',
	{
		id: int().autoincrement().primaryKey(),
		userId: int()
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		moduleId: int()
			.notNull()
			.references(() => trainingModules.id, { onDelete: 'cascade' }),
		note: varchar({ length: 500 }),
		status: mysqlEnum(trainingRequestStatuses).notNull().default('open'),
		createdAt: datetime({ mode: 'date' })
			.notNull()
			.default(sql`CURRENT_TIMESTAMP`),
		decidedAt: datetime({ mode: 'date' }),
		decidedBy: int(),
		decisionNote: varchar({ length: 500 })
	},
	(t) => [
		index('training_requests_module_idx').on(t.moduleId, t.status),
		index('training_requests_user_idx').on(t.userId, t.status)
	]
);
