// The reads behind a box's atmosphere chart and its CSV export, written once: the app's
// services, the integration test and `npm run bench:readings` all call these. Relative
// imports only, so a plain script (through tsx) can load this file too.
import { and, asc, desc, eq, gt, gte, lt, sql } from 'drizzle-orm';
import {
	bucketPlan,
	bucketStart,
	MAX_POINTS,
	type BucketPlan,
	type Series
} from '../../domain/readings-chart';
import type { ExportRow } from '../../domain/readings-export';
import type { Database } from './connect';
import { atmosphereReadings as readings } from './schema';

export type Bucket = {
	/** Unix seconds of the bucket's first instant. */
	t: number;
	n: number;
	o2Min: number;
	o2Max: number;
	h2oMin: number;
	h2oMax: number;
};

/**
 * For the ordered reads (points, export pages). Told nothing, MariaDB 10.11 often picks the
 * (box_id, at) index by box_id alone and filters the times entry by entry (EXPLAIN: ref,
 * key_len 4), so each page of an export deep into a long range rescans from the box's first
 * reading (a year's export took about twice as long); forced, it seeks straight to the range
 * (range, key_len 9). The grouped read goes unhinted, so an index that also holds the
 * values (see scripts/bench/readings.mjs) is taken when there is one.
 */
const byTime = { forceIndex: 'atmosphere_readings_box_at_uq' };

const inRange = (boxId: number, from: Date, to: Date) =>
	and(eq(readings.boxId, boxId), gte(readings.at, from), lt(readings.at, to));

/** TO_SECONDS of 1970-01-01 00:00:00: TO_SECONDS(at) minus this is Unix time. */
const EPOCH_TO_SECONDS = 62_167_219_200;

/**
 * Per-bucket count, lowest and highest of [from, to), grouped in the database, so a year of
 * minute readings (525,600 rows) comes back as about 1,500 rows. TO_SECONDS of a DATETIME
 * does not depend on the session's time zone, as UNIX_TIMESTAMP would, and integer DIV is
 * cheaper per row than FLOOR of a division (both measured on 525,600 rows).
 */
export async function readingBuckets(
	db: Database,
	boxId: number,
	from: Date,
	to: Date,
	plan: BucketPlan
): Promise<Bucket[]> {
	const slot = sql<string>`(TO_SECONDS(${readings.at}) - ${EPOCH_TO_SECONDS} + ${plan.offsetSeconds}) DIV ${plan.bucketSeconds}`;
	const rows = await db
		.select({
			slot,
			n: sql<string>`COUNT(*)`,
			o2Min: sql<string>`MIN(${readings.o2Ppm})`,
			o2Max: sql<string>`MAX(${readings.o2Ppm})`,
			h2oMin: sql<string>`MIN(${readings.h2oPpm})`,
			h2oMax: sql<string>`MAX(${readings.h2oPpm})`
		})
		.from(readings)
		.where(inRange(boxId, from, to))
		.groupBy(slot)
		.orderBy(slot);
	return rows.map((r) => ({
		t: bucketStart(Number(r.slot), plan),
		n: Number(r.n),
		o2Min: Number(r.o2Min),
		o2Max: Number(r.o2Max),
		h2oMin: Number(r.h2oMin),
		h2oMax: Number(r.h2oMax)
	}));
}

/** Every reading of [from, to), oldest first: for short ranges. */
export async function readingPoints(db: Database, boxId: number, from: Date, to: Date) {
	return db
		.select({ at: readings.at, o2: readings.o2Ppm, h2o: readings.h2oPpm })
		.from(readings, byTime)
		.where(inRange(boxId, from, to))
		.orderBy(asc(readings.at));
}

/**
 * A box's readings over [from, to) for its chart: the readings themselves when there are
 * at most `maxPoints`, else per-bucket lowest and highest (`bucketPlan` picks the bucket so
 * there are at most `maxPoints` of them). The buckets are read first (beside the newest
 * reading, for the legend); only when they hold few readings are those read one by one, so
 * a long range reads its rows once.
 */
export async function readingSeries(
	db: Database,
	boxId: number,
	from: Date,
	to: Date,
	tz: string,
	maxPoints = MAX_POINTS
): Promise<Series> {
	const plan = bucketPlan(from, to, tz, maxPoints);
	const [buckets, [newest]] = await Promise.all([
		readingBuckets(db, boxId, from, to, plan),
		db
			.select({ at: readings.at, o2: readings.o2Ppm, h2o: readings.h2oPpm })
			.from(readings, byTime)
			.where(inRange(boxId, from, to))
			.orderBy(desc(readings.at))
			.limit(1)
	]);
	const count = buckets.reduce((sum, b) => sum + b.n, 0);
	const latest = newest ? { t: newest.at.getTime() / 1000, o2: newest.o2, h2o: newest.h2o } : null;
	if (count <= maxPoints) {
		const points = count ? await readingPoints(db, boxId, from, to) : [];
		const t = points.map((p) => p.at.getTime() / 1000);
		const o2 = points.map((p) => p.o2);
		const h2o = points.map((p) => p.h2o);
		return { bucketSeconds: 0, t, o2, h2o, o2Min: o2, h2oMin: h2o, count, latest };
	}
	return {
		bucketSeconds: plan.bucketSeconds,
		t: buckets.map((b) => b.t),
		o2: buckets.map((b) => b.o2Max),
		h2o: buckets.map((b) => b.h2oMax),
		o2Min: buckets.map((b) => b.o2Min),
		h2oMin: buckets.map((b) => b.h2oMin),
		count,
		latest
	};
}

/**
 * Up to `limit` readings of [from, to) after `after` (exclusive), oldest first: one page of
 * an export. Keyed on the time, which is unique per box, so pages neither skip nor repeat
 * and each is an index range scan however deep into the range it is.
 */
export async function readingsPage(
	db: Database,
	boxId: number,
	from: Date,
	to: Date,
	after: Date | null,
	limit: number
): Promise<ExportRow[]> {
	return db
		.select({
			at: readings.at,
			o2Ppm: readings.o2Ppm,
			h2oPpm: readings.h2oPpm,
			source: readings.source,
			note: readings.note
		})
		.from(readings, byTime)
		.where(and(inRange(boxId, from, to), after ? gt(readings.at, after) : undefined))
		.orderBy(asc(readings.at))
		.limit(limit);
}
