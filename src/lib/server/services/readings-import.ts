// A sensor's log into a box's readings: first a preview of what the file was understood as,
// then the import. Both read the file with the one rule set of domain/readings-csv.ts and
// count what the box already has, so the preview's numbers are the import's.
import { and, between, eq, sql } from 'drizzle-orm';
import { format } from 'mysql2';
import type { AtmosphereState } from '$lib/domain/boxes';
import {
	MAX_REJECTED_LISTED,
	parseReadingsCsv,
	previewOf,
	type CsvReading,
	type ImportPreview,
	type Rejected
} from '$lib/domain/readings-csv';
import { config } from '../config';
import { db } from '../db';
import { atmosphereReadings, boxes } from '../db/schema';
import type { Actor } from './accounts';
import { withReadings } from './atmosphere';
import { audit } from './audit';
import { ServiceError } from './errors';

/** Rows per INSERT statement when importing. */
const BATCH = 5_000;

export type ImportReport = {
	imported: boolean;
	/** Rows stored (or, when nothing was imported, rows that would have been). */
	accepted: number;
	duplicates: number;
	rejectedCount: number;
	/** The first rejected rows, by line. */
	rejected: Rejected[];
	state?: AtmosphereState;
};

type Checked = { report: ImportReport; fresh: CsvReading[]; preview: ImportPreview };

/** Reads the file and counts what the box already has; nothing is stored. */
async function check(boxId: number, text: string, now: Date): Promise<Checked> {
	const [box] = await db.select({ id: boxes.id }).from(boxes).where(eq(boxes.id, boxId));
	if (!box) throw new ServiceError(404, 'The box was not found.');
	const parsed = parseReadingsCsv(text, { tz: config.facilityTz, now });
	if (!parsed.ok) throw new ServiceError(400, parsed.message, { fields: { file: parsed.message } });
	const { rows, rejected } = parsed;
	if (!rows.length && !rejected.length) {
		const message = 'The file has a header but no readings.';
		throw new ServiceError(400, message, { fields: { file: message } });
	}
	const fresh = await withoutStored(boxId, rows);
	return {
		fresh,
		preview: previewOf(parsed, config.facilityTz),
		report: {
			imported: false,
			accepted: fresh.length,
			duplicates: parsed.duplicatesInFile + rows.length - fresh.length,
			rejectedCount: rejected.length,
			rejected: rejected.slice(0, MAX_REJECTED_LISTED)
		}
	};
}

/**
 * What a log would do, before anything is saved: how the file was read (separator, decimal
 * mark, columns by the file's own header words, date formats, time zone, the first rows as
 * read) and the report the import would give.
 */
export async function previewReadings(
	boxId: number,
	text: string,
	opts: { now?: Date } = {}
): Promise<{ preview: ImportPreview; report: ImportReport }> {
	const { preview, report } = await check(boxId, text, opts.now ?? new Date());
	return { preview, report };
}

/**
 * Imports a sensor's log. The whole file is checked first; when some rows are rejected,
 * nothing is stored unless `skipRejected` is set, and then the good rows go in together.
 * Rows the box already has (same second) are counted as duplicates and left alone.
 */
export async function importReadings(
	actor: Actor,
	boxId: number,
	text: string,
	opts: { skipRejected?: boolean; now?: Date } = {}
): Promise<ImportReport> {
	const { report, fresh } = await check(boxId, text, opts.now ?? new Date());
	if (report.rejectedCount && !opts.skipRejected) return report;
	const { value: inserted, state } = await withReadings(boxId, actor.id, async (tx) => {
		let stored = 0;
		for (let i = 0; i < fresh.length; i += BATCH) {
			const [result] = await tx.execute(insertBatch(boxId, actor.id, fresh.slice(i, i + BATCH)));
			stored += (result as unknown as { affectedRows: number }).affectedRows;
		}
		await audit(tx, {
			actorId: actor.id,
			action: 'readings.import',
			entity: 'box',
			entityId: boxId,
			details: { stored, duplicates: report.duplicates, rejected: report.rejectedCount }
		});
		return stored;
	});
	// Another import of the same rows may have landed between the check and the insert.
	return {
		...report,
		imported: true,
		accepted: inserted,
		duplicates: report.duplicates + fresh.length - inserted,
		state
	};
}

const utcText = (at: Date) => at.toISOString().slice(0, 19).replace('T', ' ');

/**
 * One multi-row INSERT IGNORE for a batch of imported readings. Built with mysql2's own
 * escaping (every value is a number or a fixed-shape date string) rather than the query
 * builder, which spends longer building 5,000-row statements than MariaDB takes to run them.
 */
function insertBatch(
	boxId: number,
	actorId: number,
	rows: { at: Date; o2Ppm: number; h2oPpm: number }[]
) {
	const values = rows.map((r) => [boxId, utcText(r.at), r.o2Ppm, r.h2oPpm, 'csv', actorId]);
	return sql.raw(
		format(
			'INSERT IGNORE INTO atmosphere_readings (box_id, at, o2_ppm, h2o_ppm, source, recorded_by) VALUES ?',
			[values]
		)
	);
}

/** The rows whose second the box has no reading for yet. */
async function withoutStored<R extends { at: Date }>(boxId: number, rows: R[]): Promise<R[]> {
	if (!rows.length) return rows;
	// A loop, not Math.min(...times): a year's log would overflow the argument list.
	let first = Infinity;
	let last = -Infinity;
	for (const r of rows) {
		first = Math.min(first, r.at.getTime());
		last = Math.max(last, r.at.getTime());
	}
	const from = new Date(first);
	const to = new Date(last);
	const stored = await db
		.select({ at: atmosphereReadings.at })
		.from(atmosphereReadings)
		.where(and(eq(atmosphereReadings.boxId, boxId), between(atmosphereReadings.at, from, to)));
	const have = new Set(stored.map((r) => r.at.getTime()));
	return rows.filter((r) => !have.has(r.at.getTime()));
}
