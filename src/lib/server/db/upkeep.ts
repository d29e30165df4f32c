import {
	boolean,
	datetime,
	double,
	index,
	int,
	mysqlEnum,
	mysqlTable,
	smallint,
	tinyint,
	varchar
} from 'drizzle-orm/mysql-core';
import { sql } from 'drizzle-orm';
import { json } from './types';
import { leakMethods, maintenanceKinds } from '../../domain/upkeep';
import { boxes } from './boxes';
import { outages } from './bookings';
import { trainingModules } from './training';
import { users } from './users';

export const leakTests = mysqlTable(
	'leak_tests',
	{
		id: int().autoincrement().primaryKey(),
		boxId: int()
			.notNull()
			.references(() => boxes.id, { onDelete: 'cascade' }),
		method: mysqlEnum(leakMethods).notNull(),
		/** What was measured, as entered (the method's own fields). */
		inputs: json().$type<Record<string, number>>().notNull(),
		hourlyLeakRate: double().notNull(),
		/** ISO 10648-2 class 1–4, null when worse than class 4. */
		isoClass: tinyint(),
		requiredClass: tinyint().notNull(),
		passed: boolean().notNull(),
		note: varchar({ length: 500 }),
		testedAt: datetime({ mode: 'date' }).notNull(),
		testedBy: int().references(() => users.id, { onDelete: 'set null' }),
		createdAt: datetime({ mode: 'date' })
			.notNull()
			.default(sql`CURRENT_TIMESTAMP`)
	},
	(t) => [index('leak_tests_box_tested_idx').on(t.boxId, t.testedAt)]
);

export const maintenanceTasks = mysqlTable(
	'maintenance_tasks',
	{
		id: int().autoincrement().primaryKey(),
		boxId: int()
			.notNull()
			.references(() => boxes.id, { onDelete: 'cascade' }),
		kind: mysqlEnum(maintenanceKinds).notNull(),
		title: varchar({ length: 120 }).notNull(),
		intervalDays: smallint().notNull(),
		/** How long the box is out of service while it is done, when it needs an outage. */
		outageMinutes: smallint().notNull().default(0),
		lastDoneAt: datetime({ mode: 'date' }),
		nextDueAt: datetime({ mode: 'date' }).notNull(),
		/** The due date managers were last told about, so each falling-due mails once. */
		notifiedDueAt: datetime({ mode: 'date' }),
		/** The outage booked for the next time it is done, until it is done. */
		plannedOutageId: int().references(() => outages.id, { onDelete: 'set null' }),
		active: boolean().notNull().default(true),
		createdAt: datetime({ mode: 'date' })
			.notNull()
			.default(sql`CURRENT_TIMESTAMP`)
	},
	(t) => [index('maintenance_tasks_due_idx').on(t.active, t.nextDueAt)]
);

export const maintenanceLog = mysqlTable(
	'maintenance_log',
	{
		id: int().autoincrement().primaryKey(),
		taskId: int()
			.notNull()
			.references(() => maintenanceTasks.id, { onDelete: 'cascade' }),
		doneAt: datetime({ mode: 'date' }).notNull(),
		doneBy: int().references(() => users.id, { onDelete: 'set null' }),
		note: varchar({ length: 500 }),
		/** The planned outage booked for the task, if any. */
		outageId: int().references(() => outages.id, { onDelete: 'set null' })
	},
	(t) => [index('maintenance_log_task_idx').on(t.taskId, t.doneAt)]
);

export const documents = mysqlTable(
	'documents',
	{
		id: int().autoincrement().primaryKey(),
		boxId: int().references(() => boxes.id, { onDelete: 'cascade' }),
		moduleId: int().references(() => trainingModules.id, { onDelete: 'cascade' }),
		title: varchar({ length: 160 }).notNull(),
		storageKey: varchar({ length: 120 }).notNull().unique(),
		sizeBytes: int().notNull(),
		uploadedBy: int().references(() => users.id, { onDelete: 'set null' }),
		uploadedAt: datetime({ mode: 'date' })
			.notNull()
			.default(sql`CURRENT_TIMESTAMP`)
	},
	(t) => [index('documents_box_idx').on(t.boxId), index('documents_module_idx').on(t.moduleId)]
);

export type LeakTest = typeof leakTests.$inferSelect;
export type MaintenanceTask = typeof maintenanceTasks.$inferSelect;
