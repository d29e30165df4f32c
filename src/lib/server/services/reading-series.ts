// A box's readings for its chart and as a CSV download. The queries are in
// db/reading-series.ts; this adds the box check, the facility's zone and the streaming.
import { eq } from 'drizzle-orm';
import {
	exportFilename,
	READINGS_CSV_HEADER,
	readingCsvLine,
	zoneStamper
} from '$lib/domain/readings-export';
import type { Series } from '$lib/domain/readings-chart';
import { config } from '../config';
import { db } from '../db';
import { readingSeries, readingsPage } from '../db/reading-series';
import { boxes } from '../db/schema';
import { notFound } from './errors';

async function boxName(boxId: number): Promise<string> {
	const [box] = await db.select({ name: boxes.name }).from(boxes).where(eq(boxes.id, boxId));
	if (!box) throw notFound('The box');
	return box.name;
}

/** The chart's series of [from, to): readings, or per-bucket lowest and highest. */
export async function chartSeries(boxId: number, from: Date, to: Date): Promise<Series> {
	await boxName(boxId);
	return readingSeries(db, boxId, from, to, config.facilityTz);
}

/** Readings per page of the export: a few hundred kB of CSV at a time. */
const EXPORT_PAGE = 5_000;

/**
 * The readings of [from, to) as CSV (`time,o2_ppm,h2o_ppm,source,note`, times with the
 * facility's offset), read a page at a time as the client takes them, so a year of minute
 * readings never sits in memory whole and no connection is held while the client is slow.
 */
export async function readingsCsv(
	boxId: number,
	from: Date,
	to: Date
): Promise<{ filename: string; body: ReadableStream<Uint8Array> }> {
	const name = await boxName(boxId);
	// The file is named for the days it holds: from the first reading when the range opens
	// before it (an export of everything).
	const [first] = await readingsPage(db, boxId, from, to, null, 1);
	const named = first && first.at > from ? first.at : from;
	const stamp = zoneStamper(config.facilityTz);
	const encoder = new TextEncoder();
	let after: Date | null = null;
	let headerSent = false;
	const body = new ReadableStream<Uint8Array>(
		{
			async pull(controller) {
				if (!headerSent) {
					headerSent = true;
					controller.enqueue(encoder.encode(`${READINGS_CSV_HEADER}\r\n`));
					return;
				}
				const rows = await readingsPage(db, boxId, from, to, after, EXPORT_PAGE);
				if (rows.length) {
					after = rows[rows.length - 1].at;
					controller.enqueue(encoder.encode(rows.map((r) => readingCsvLine(r, stamp)).join('')));
				}
				if (rows.length < EXPORT_PAGE) controller.close();
			}
		},
		{ highWaterMark: 1 }
	);
	return { filename: exportFilename(name, named, to, config.facilityTz), body };
}
