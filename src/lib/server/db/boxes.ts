import {
	boolean,
	datetime,
	decimal,
	index,
	int,
	mysqlEnum,
	mysqlTable,
	primaryKey,
	smallint,
	text,
	tinyint,
	varchar
} from 'drizzle-orm/mysql-core';
import { sql } from 'drizzle-orm';
import { json } from './types';
import { gases, boxStatuses, atmosphereStates } from '../../domain/boxes';
import { trainingModules } from './training';

export const boxes = mysqlTable('boxes', {
	id: int().autoincrement().primaryKey(),
	name: varchar({ length: 80 }).notNull().unique(),
	room: varchar({ length: 80 }).notNull(),
	gas: mysqlEnum(gases).notNull(),
	volumeL: int().notNull(),
	description: text(),
	status: mysqlEnum(boxStatuses).notNull().default('in_service'),
	atmosphereState: mysqlEnum(atmosphereStates).notNull().default('ok'),
	// Atmosphere thresholds in ppm.
	o2WarnPpm: decimal({ precision: 8, scale: 2, mode: 'number' }).notNull().default(1),
	o2AlarmPpm: decimal({ precision: 8, scale: 2, mode: 'number' }).notNull().default(10),
	h2oWarnPpm: decimal({ precision: 8, scale: 2, mode: 'number' }).notNull().default(1),
	h2oAlarmPpm: decimal({ precision: 8, scale: 2, mode: 'number' }).notNull().default(10),
	// Hourly rates in the facility's currency.
	rateInternal: decimal({ precision: 10, scale: 2, mode: 'number' }).notNull().default(0),
	rateExternal: decimal({ precision: 10, scale: 2, mode: 'number' }).notNull().default(0),
	// Booking rules (minutes unless named otherwise).
	slotStepMin: smallint().notNull().default(15),
	minLengthMin: smallint().notNull().default(30),
	maxLengthMin: smallint().notNull().default(240),
	horizonDays: smallint().notNull().default(28),
	weeklyQuotaMin: smallint().notNull().default(720),
	purgeMin: smallint().notNull().default(30),
	needsApproval: boolean().notNull().default(false),
	excludedClasses: json().$type<string[]>().notNull().default([]),
	// Leak tightness the box must show (ISO 10648-2 class 1–4).
	requiredLeakClass: tinyint().notNull().default(3),
	// A glove change ends only after a passing leak test or an in-spec reading.
	gloveChangeNeedsProof: boolean().notNull().default(false),
	// A cancellation by the booker this close to the start is billed as booked.
	cancelWindowHours: smallint().notNull().default(24),
	// Without a check-in this long after the start, a booking becomes a no-show.
	noShowGraceMin: smallint().notNull().default(15),
	createdAt: datetime({ mode: 'date' })
		.notNull()
		.default(sql`CURRENT_TIMESTAMP`),
	/** Raised by db/locks.ts lockBox: the box's lock as a write a Galera cluster certifies. */
	lockVersion: int().notNull().default(0)
});

export const boxPorts = mysqlTable(
	'box_ports',
	{
		id: int().autoincrement().primaryKey(),
		boxId: int()
			.notNull()
			.references(() => boxes.id, { onDelete: 'cascade' }),
		position: varchar({ length: 40 }).notNull(),
		diameterMm: smallint().notNull(),
		sortOrder: smallint().notNull().default(0)
	},
	(t) => [index('box_ports_box_idx').on(t.boxId)]
);

export const boxRequiredModules = mysqlTable(
	'box_required_modules',
	{
		boxId: int()
			.notNull()
			.references(() => boxes.id, { onDelete: 'cascade' }),
		moduleId: int()
			.notNull()
			.references(() => trainingModules.id, { onDelete: 'restrict' })
	},
	(t) => [primaryKey({ columns: [t.boxId, t.moduleId] })]
);

export type Box = typeof boxes.$inferSelect;
