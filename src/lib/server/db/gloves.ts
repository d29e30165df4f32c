import {
	boolean,
	datetime,
	decimal,
	index,
	int,
	mysqlEnum,
	mysqlTable,
	smallint,
	varchar
} from 'drizzle-orm/mysql-core';
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

export type GloveChangeStep = {
	key: string;
	at: string;
	byId: number;
	byName: string;
	detail?: string;
};
export type NewGloveSpec = {
	material: (typeof gloveMaterials)[number];
	thicknessMm: number;
	size: string;
	hand: (typeof gloveHands)[number];
	turnedInsideOut: boolean;
};

export const gloveChanges = mysqlTable('glove_changes', {
	id: int().autoincrement().primaryKey(),
	outageId: int()
		.notNull()
		.references(() => outages.id, { onDelete: 'cascade' }),
	portId: int()
		.notNull()
		.references(() => boxPorts.id, { onDelete: 'cascade' }),
	oldGloveId: int(),
	newGloveId: int(),
	newGlove: json().$type<NewGloveSpec | null>(),
	steps: json().$type<GloveChangeStep[]>().notNull().default([]),
	flushCycles: smallint().notNull().default(0),
	overrideNote: varchar({ length: 1000 }),
	startedBy: int().notNull(),
	startedAt: datetime({ mode: 'date' }).notNull(),
	completedAt: datetime({ mode: 'date' }),
	completedBy: int()
});
