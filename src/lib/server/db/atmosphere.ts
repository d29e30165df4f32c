import {
	bigint,
	datetime,
	decimal,
	index,
	int,
	mysqlEnum,
	mysqlTable
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
		recordedBy: int()
	},
	(t) => [index('atmosphere_readings_box_at_idx').on(t.boxId, t.at)]
);
