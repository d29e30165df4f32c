// A box's readings as a list a person pages through: every reading, sorted and filtered in
// SQL with the total, so a year of a sensor's log is never cut off silently. The chart and
// its export read the same table through db/reading-series.ts.
import { and, count, eq, gte, lt } from 'drizzle-orm';
import { readingSources, type ReadingSource } from '$lib/domain/boxes';
import type { ListQuery, ListSpec } from '$lib/domain/listing';
import { orderOf, pageInSql } from '../listing';
import { db } from '../db';
import { atmosphereReadings, users } from '../db/schema';

export const readingsList = {
	sorts: ['at', 'o2', 'h2o'],
	defaultSort: 'at',
	defaultDir: 'desc',
	filters: { source: readingSources },
	perPage: 50
} as const satisfies ListSpec;

export type ReadingsQuery = ListQuery<(typeof readingsList.sorts)[number], 'source'>;

/** How many readings a box has: the box page's link to all of them. */
export async function readingCount(boxId: number): Promise<number> {
	const [row] = await db
		.select({ n: count() })
		.from(atmosphereReadings)
		.where(eq(atmosphereReadings.boxId, boxId));
	return row?.n ?? 0;
}

/**
 * One page of a box's readings with the total: by time, O2 or H2O, of one source, between
 * two instants ([since, until)). Ties are broken by time, so a page never repeats a row.
 */
export async function readingsOf(
	boxId: number,
	query: ReadingsQuery,
	range: { since?: Date; until?: Date } = {}
) {
	const where = and(
		eq(atmosphereReadings.boxId, boxId),
		query.filters.source
			? eq(atmosphereReadings.source, query.filters.source as ReadingSource)
			: undefined,
		range.since ? gte(atmosphereReadings.at, range.since) : undefined,
		range.until ? lt(atmosphereReadings.at, range.until) : undefined
	);
	return pageInSql(
		query,
		async () => {
			const [row] = await db.select({ n: count() }).from(atmosphereReadings).where(where);
			return row.n;
		},
		(limit, offset) =>
			db
				.select({
					id: atmosphereReadings.id,
					at: atmosphereReadings.at,
					o2Ppm: atmosphereReadings.o2Ppm,
					h2oPpm: atmosphereReadings.h2oPpm,
					source: atmosphereReadings.source,
					note: atmosphereReadings.note,
					byName: users.name
				})
				.from(atmosphereReadings)
				.leftJoin(users, eq(users.id, atmosphereReadings.recordedBy))
				.where(where)
				.orderBy(
					...orderOf(
						query,
						{
							at: atmosphereReadings.at,
							o2: atmosphereReadings.o2Ppm,
							h2o: atmosphereReadings.h2oPpm
						},
						// (box, at) is unique: the time settles ties between equal values.
						atmosphereReadings.at
					)
				)
				.limit(limit)
				.offset(offset)
	);
}
