import {
	boolean,
	datetime,
	decimal,
	index,
	int,
	mysqlEnum,
	mysqlTable,
	smallint,
	uniqueIndex,
	varchar
} from 'drizzle-orm/mysql-core';
import { sql } from 'drizzle-orm';
import type { StepEntry } from '../../domain/glove-change';
import { damageLocations, gloveHands, gloveMaterials } from '../../domain/gloves';
import { boxPorts } from './boxes';
import { outages } from './bookings';
import { json } from './types';

export const gloves = mysqlTable(
	'gloves',
	{
		id: int().autoincrement().primaryKey(),
		portId: int()
			.notNull()
			.references(() => boxPorts.id, { onDelete: 'cascade' }),
		material: mysqlEnum(gloveMaterials).notNull(),
		thicknessMm: decimal({ precision: 4, scale: 2, mode: 'number' }).notNull(),
		size: varchar({ length: 10 }).notNull(),
		/** The hand as made; turnedInsideOut flips the hand it is worn as. */
		hand: mysqlEnum(gloveHands).notNull(),
		turnedInsideOut: boolean().notNull().default(false),
		installedAt: datetime({ mode: 'date' }).notNull(),
		removedAt: datetime({ mode: 'date' }),
		removedReason: varchar({ length: 300 })
	},
	(t) => [index('gloves_port_idx').on(t.portId, t.removedAt)]
);

export const gloveActions = [
	'none',
	'patched',
	'change_scheduled',
	'replaced',
	'box_out_of_service'
] as const;

export const gloveInspections = mysqlTable(
	'glove_inspections',
	{
		id: int().autoincrement().primaryKey(),
		gloveId: int()
			.notNull()
			.references(() => gloves.id, { onDelete: 'cascade' }),
		at: datetime({ mode: 'date' }).notNull(),
		byUserId: int(),
		damaged: boolean().notNull().default(false),
		location: mysqlEnum(damageLocations),
		hand: mysqlEnum(['left', 'right']),
		holeSizeMm: decimal({ precision: 6, scale: 1, mode: 'number' }),
		action: mysqlEnum(gloveActions).notNull().default('none'),
		notes: varchar({ length: 1000 }),
		photoKey: varchar({ length: 200 })
	},
	(t) => [index('glove_inspections_glove_idx').on(t.gloveId, t.at)]
);

export const gloveChangeStatuses = ['open', 'completed', 'abandoned'] as const;

export const gloveChanges = mysqlTable(
	'glove_changes',
	{
		id: int().autoincrement().primaryKey(),
		outageId: int()
			.notNull()
			.references(() => outages.id, { onDelete: 'cascade' }),
		portId: int()
			.notNull()
			.references(() => boxPorts.id, { onDelete: 'cascade' }),
		status: mysqlEnum(gloveChangeStatuses).notNull().default('open'),
		oldGloveId: int(),
		newGloveId: int(),
		/** Each step with when, by whom, a skip's reason and (when fitted) the new glove. */
		steps: json().$type<StepEntry[]>().notNull().default([]),
		flushCycles: smallint().notNull().default(0),
		/** The glove's gas volume for the flush estimate, when a manager gave one. */
		gloveVolumeL: decimal({ precision: 5, scale: 2, mode: 'number' }),
		overrideNote: varchar({ length: 1000 }),
		handConfirmed: boolean().notNull().default(false),
		startedBy: int().notNull(),
		startedAt: datetime({ mode: 'date' }).notNull(),
		completedAt: datetime({ mode: 'date' }),
		completedBy: int(),
		abandonedAt: datetime({ mode: 'date' }),
		abandonedBy: int(),
		abandonReason: varchar({ length: 1000 })
	},
	(t) => [index('glove_changes_port_idx').on(t.portId, t.status)]
);

/** Spare gloves on the shelf, one row per kind. */
export const gloveStock = mysqlTable(
	'glove_stock',
	{
		id: int().autoincrement().primaryKey(),
		material: mysqlEnum(gloveMaterials).notNull(),
		size: varchar({ length: 10 }).notNull(),
		thicknessMm: decimal({ precision: 4, scale: 2, mode: 'number' }).notNull(),
		hand: mysqlEnum(gloveHands).notNull(),
		quantity: int().notNull().default(0),
		/** At or below this, the managers are told. */
		minQuantity: int().notNull().default(1),
		updatedAt: datetime({ mode: 'date', fsp: 3 })
			.notNull()
			.default(sql`CURRENT_TIMESTAMP(3)`)
			.$onUpdate(() => new Date())
	},
	(t) => [uniqueIndex('glove_stock_kind_idx').on(t.material, t.size, t.thicknessMm, t.hand)]
);

export type GloveStock = typeof gloveStock.$inferSelect;
export type GloveChange = typeof gloveChanges.$inferSelect;
