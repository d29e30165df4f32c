import {
	bigint,
	datetime,
	decimal,
	index,
	int,
	mysqlEnum,
	mysqlTable,
	uniqueIndex,
	varchar
} from 'drizzle-orm/mysql-core';
import { readingSources } from '../../domain/boxes';
import { boxes } from './boxes';

export const atmosphereReadings = mysqlTable(
	'atmosphere_readings',
	{
		id: bigint({ mode: 'number' }).autoincrement().primaryKey(),
		boxId: int()
			.notNull()
			.references(() => boxes.id, { onDelete: 'cascade' }),
		at: datetime({ mode: 'date' }).notNull(),
		o2Ppm: decimal({ precision: 10, scale: 3, mode: 'number' }).notNull(),
		h2oPpm: decimal({ precision: 10, scale: 3, mode: 'number' }).notNull(),
		source: mysqlEnum(readingSources).notNull(),
		recordedBy: int(),
		/** The booking a check-in or check-out reading belongs to. */
		bookingId: int(),
		/** What the person reading it saw: a problem worth a manager's look. */
		note: varchar({ length: 500 })
	},
	// One reading per box and second: a log imported twice adds nothing.
	(t) => [
		uniqueIndex('atmosphere_readings_box_at_uq').on(t.boxId, t.at),
		// Covers the chart's per-bucket lowest and highest (db/reading-series.ts): a year of
		// one-minute readings is read from the index alone, about half the time of a lookup
		// per row (npm run bench:readings).
		index('atmosphere_readings_series_idx').on(t.boxId, t.at, t.o2Ppm, t.h2oPpm),
		index('atmosphere_readings_booking_idx').on(t.bookingId)
	]
);
