import {
	type AnyMySqlColumn,
	boolean,
	datetime,
	index,
	int,
	mysqlEnum,
	mysqlTable,
	varchar
} from 'drizzle-orm/mysql-core';
import { sql } from 'drizzle-orm';
import { json } from './types';
import { bookingStatuses, cancelCauses, outageKinds } from '../../domain/bookings';
import { boxes } from './boxes';
import { users } from './users';
import { researchGroups } from './groups';

export const bookings = mysqlTable(
	'bookings',
	{
		id: int().autoincrement().primaryKey(),
		boxId: int()
			.notNull()
			.references(() => boxes.id, { onDelete: 'cascade' }),
		userId: int()
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		/** The group the booking is billed to: the booker's group when it was made. */
		groupId: int().references(() => researchGroups.id, { onDelete: 'set null' }),
		startAt: datetime({ mode: 'date' }).notNull(),
		endAt: datetime({ mode: 'date' }).notNull(),
		/** endAt plus the box's purge time when volatile solvents are declared, else endAt. */
		blockedUntil: datetime({ mode: 'date' }).notNull(),
		purpose: varchar({ length: 200 }).notNull(),
		chemicalClasses: json().$type<string[]>().notNull().default([]),
		volatileSolvents: boolean().notNull().default(false),
		status: mysqlEnum(bookingStatuses).notNull(),
		cancelReason: varchar({ length: 500 }),
		cancelCause: mysqlEnum(cancelCauses),
		cancelledAt: datetime({ mode: 'date' }),
		cancelledBy: int(),
		/** The outage that cancelled it, set in the same transaction as the cancellation. */
		outageId: int().references((): AnyMySqlColumn => outages.id, { onDelete: 'set null' }),
		decidedBy: int(),
		decidedAt: datetime({ mode: 'date' }),
		/** When it was confirmed (at once, or on approval); null while it waited for approval. */
		confirmedAt: datetime({ mode: 'date' }),
		checkInAt: datetime({ mode: 'date' }),
		checkOutAt: datetime({ mode: 'date' }),
		/** iCalendar SEQUENCE: raised on every change the holder's calendar should see. */
		sequence: int().notNull().default(0),
		/** Bookings made together as a weekly series share the first one's id. */
		seriesId: int(),
		createdAt: datetime({ mode: 'date' })
			.notNull()
			.default(sql`CURRENT_TIMESTAMP`),
		updatedAt: datetime({ mode: 'date', fsp: 3 })
			.notNull()
			.default(sql`CURRENT_TIMESTAMP(3)`)
			.$onUpdate(() => new Date())
	},
	(t) => [
		index('bookings_box_start_idx').on(t.boxId, t.startAt),
		index('bookings_box_end_idx').on(t.boxId, t.blockedUntil),
		index('bookings_user_start_idx').on(t.userId, t.startAt),
		index('bookings_group_start_idx').on(t.groupId, t.startAt),
		// Pending counts on every manager's page, and the no-show sweep.
		index('bookings_status_start_idx').on(t.status, t.startAt),
		index('bookings_outage_idx').on(t.outageId)
	]
);

export const outages = mysqlTable(
	'outages',
	{
		id: int().autoincrement().primaryKey(),
		boxId: int()
			.notNull()
			.references(() => boxes.id, { onDelete: 'cascade' }),
		startAt: datetime({ mode: 'date' }).notNull(),
		endAt: datetime({ mode: 'date' }).notNull(),
		kind: mysqlEnum(outageKinds).notNull(),
		reason: varchar({ length: 500 }).notNull(),
		createdBy: int(),
		createdAt: datetime({ mode: 'date' })
			.notNull()
			.default(sql`CURRENT_TIMESTAMP`),
		sequence: int().notNull().default(0),
		updatedAt: datetime({ mode: 'date', fsp: 3 })
			.notNull()
			.default(sql`CURRENT_TIMESTAMP(3)`)
			.$onUpdate(() => new Date())
	},
	(t) => [index('outages_box_start_idx').on(t.boxId, t.startAt)]
);

export type Booking = typeof bookings.$inferSelect;
export type Outage = typeof outages.$inferSelect;

/** "Tell me if this frees up": one notice when the watched time on the box is free. */
export const bookingWatches = mysqlTable(
	'booking_watches',
	{
		id: int().autoincrement().primaryKey(),
		userId: int()
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		boxId: int()
			.notNull()
			.references(() => boxes.id, { onDelete: 'cascade' }),
		startAt: datetime({ mode: 'date' }).notNull(),
		endAt: datetime({ mode: 'date' }).notNull(),
		createdAt: datetime({ mode: 'date' })
			.notNull()
			.default(sql`CURRENT_TIMESTAMP`),
		notifiedAt: datetime({ mode: 'date' })
	},
	(t) => [index('booking_watches_box_idx').on(t.boxId, t.notifiedAt, t.startAt)]
);
