// How a box's atmosphere chart is cut into buckets and how tall its axis is. Pure, so the
// database query, the chart and their tests share one answer.
import { IANAZone } from 'luxon';

/**
 * Bucket lengths a long range may use, in seconds. Each below a day divides a day, so
 * buckets begin at round times on the facility's clock (00:00, 06:00, 12:00, 18:00).
 */
export const BUCKET_SIZES = [
	60, 120, 300, 600, 900, 1800, 3600, 7200, 10_800, 21_600, 43_200, 86_400, 172_800, 604_800
] as const;

/**
 * At most this many points per chart: raw readings up to it, buckets past it. A year fits
 * in 6-hour buckets (1,461), a month in 30-minute ones, a week in 10-minute ones.
 */
export const MAX_POINTS = 1_500;

export type BucketPlan = {
	/** Length of one bucket. */
	bucketSeconds: number;
	/**
	 * Seconds added to Unix time before dividing, so buckets start on the facility's wall
	 * clock: its UTC offset at the start of the range (a range across a daylight-saving
	 * change keeps that start's alignment).
	 */
	offsetSeconds: number;
};

/** The smallest bucket that cuts [from, to) into at most `maxBuckets` pieces. */
export function bucketPlan(from: Date, to: Date, tz: string, maxBuckets = MAX_POINTS): BucketPlan {
	const span = Math.max(0, (to.getTime() - from.getTime()) / 1000);
	// A range that does not start on a bucket's edge touches one more bucket than span/size.
	const fits = (size: number) => Math.ceil(span / size) + 1 <= maxBuckets;
	const size = BUCKET_SIZES.find(fits) ?? Math.ceil(span / (maxBuckets - 1) / 86_400) * 86_400;
	const zone = IANAZone.create(tz);
	const offsetSeconds = zone.isValid ? zone.offset(from.getTime()) * 60 : 0;
	return { bucketSeconds: size, offsetSeconds };
}

/** The first instant (Unix seconds) of the bucket numbered `slot` under `plan`. */
export const bucketStart = (slot: number, plan: BucketPlan) =>
	slot * plan.bucketSeconds - plan.offsetSeconds;

/** The bucket number of an instant (Unix seconds): what the database computes per row. */
export const bucketOf = (unixSeconds: number, plan: BucketPlan) =>
	Math.floor((unixSeconds + plan.offsetSeconds) / plan.bucketSeconds);

/** A chart's data as GET /api/boxes/:id/readings answers it. */
export type Series = {
	/** 0 when every reading is a point; else the length of each bucket. */
	bucketSeconds: number;
	/** Unix seconds: each reading's time, or each bucket's first instant. */
	t: number[];
	/** The readings, or each bucket's highest: an excursion is never thinned away. */
	o2: number[];
	h2o: number[];
	/** Each bucket's lowest (the readings themselves when not bucketed). */
	o2Min: number[];
	h2oMin: number[];
	/** Readings in the range. */
	count: number;
	/** The newest reading in the range, for the chart's idle legend. */
	latest: { t: number; o2: number; h2o: number } | null;
};

export type Levels = { warn: number; alarm: number };

/** The lowest value a log axis shows; readings at or under it are drawn on it. */
export const LOG_FLOOR_PPM = 0.01;

/** A step of 1, 2 or 5 times a power of ten, at least `rough`. */
export function niceStep(rough: number): number {
	if (!(rough > 0)) return 1;
	const power = 10 ** Math.floor(Math.log10(rough));
	const f = rough / power;
	return (f <= 1 ? 1 : f <= 2 ? 2 : f <= 5 ? 5 : 10) * power;
}

/** Rounds away float noise (0.30000000000000004 → 0.3). */
const tidy = (v: number) => Number(v.toPrecision(12));

/**
 * The y-axis of one gas: the data's lowest and highest with some headroom, rounded to
 * readable steps; zero when the data sits near it. A warn or alarm level within half the
 * data's height again above it is taken in, so how close the readings come is seen. On a
 * log axis the range is whole decades and always holds both levels.
 * Layout rules, common practice (not from a published source).
 */
export function yRange(
	data: { min: number; max: number } | null,
	levels: Levels,
	log = false
): [number, number] {
	if (log) {
		const lo = Math.max(LOG_FLOOR_PPM, Math.min(data?.min ?? levels.warn, levels.warn));
		const hi = Math.max(data?.max ?? 0, levels.alarm, lo) * 1.2;
		return [
			tidy(10 ** Math.floor(Math.log10(lo))),
			tidy(10 ** Math.max(Math.ceil(Math.log10(hi)), Math.floor(Math.log10(lo)) + 1))
		];
	}
	// Nothing to draw: the range up to the warn level.
	const d = data ?? { min: 0, max: levels.warn };
	let hi = Math.max(d.max, 0);
	for (const level of [levels.warn, levels.alarm]) if (level > hi && level <= hi * 1.5) hi = level;
	const lo = Math.max(0, Math.min(d.min, hi));
	const height = hi - lo;
	const pad = height > 0 ? height * 0.1 : Math.max(hi * 0.1, 0.05);
	const step = niceStep((height + 2 * pad) / 5);
	const top = tidy(Math.ceil((hi + pad) / step) * step);
	// Readings near zero are read against zero.
	const bottom = lo <= height * 0.5 ? 0 : tidy(Math.max(0, Math.floor((lo - pad) / step) * step));
	return [bottom, top > bottom ? top : tidy(bottom + step)];
}

/** A reading for a legend: to three decimals at most, as stored ("0.4", "12.125"). */
export function formatPpm(value: number): string {
	return String(Number(value.toFixed(3)));
}

/** A bucket's spread for a legend: "0.3–0.7", or one value when low and high agree. */
export function formatSpread(low: number, high: number): string {
	return low === high ? formatPpm(high) : `${formatPpm(low)}–${formatPpm(high)}`;
}
