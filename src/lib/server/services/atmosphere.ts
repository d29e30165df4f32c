// Atmosphere readings and the box's atmosphere state.
// Every write takes the box row's lock first (SELECT … FOR UPDATE, as bookings do), so the
// state follows the newest reading even when readings arrive at the same moment.
import { and, asc, between, count, desc, eq, gte, lte, sql } from 'drizzle-orm';
import {
	checkReading,
	describeReading,
	nextAtmosphereState,
	type Thresholds
} from '$lib/domain/atmosphere';
import type { AtmosphereState } from '$lib/domain/boxes';
import { MAX_REJECTED_LISTED, parseReadingsCsv, type Rejected } from '$lib/domain/readings-csv';
import { format } from 'mysql2';
import { config } from '../config';
import { db, type Transaction } from '../db';
import { atmosphereReadings, boxes } from '../db/schema';
import type { Actor } from './accounts';
import { audit } from './audit';
import { isDuplicateKey, ServiceError } from './errors';
import { notifyManagers } from './notifications';
import { transaction } from '../db/transaction';
import { lockBox } from '../db/locks';

type Source = 'manual' | 'check_in' | 'check_out' | 'csv';

export type ReadingInput = {
	at?: Date;
	o2Ppm: number;
	h2oPpm: number;
	source?: Source;
	bookingId?: number;
	note?: string | null;
};

/** A reading this far ahead of the server's clock is refused. */
const FUTURE_SLACK_MS = 5 * 60_000;
/** Rows per INSERT statement when importing. */
const BATCH = 5_000;

type LockedBox = Thresholds & { id: number; name: string; atmosphereState: AtmosphereState };

/**
 * Moves the box to the state its newest reading calls for; tells the managers when it goes
 * into alarm or comes out of it. Returns the state.
 */
async function settleState(
	tx: Transaction,
	box: LockedBox,
	actorId: number | null
): Promise<AtmosphereState> {
	const [newest] = await tx
		.select()
		.from(atmosphereReadings)
		.where(eq(atmosphereReadings.boxId, box.id))
		.orderBy(desc(atmosphereReadings.at))
		.limit(1);
	if (!newest) return box.atmosphereState;
	const next = nextAtmosphereState(box.atmosphereState, newest, box);
	if (next === box.atmosphereState) return next;
	await tx.update(boxes).set({ atmosphereState: next }).where(eq(boxes.id, box.id));
	await audit(tx, {
		actorId,
		action: 'box.atmosphere',
		entity: 'box',
		entityId: box.id,
		details: { from: box.atmosphereState, to: next, readingId: newest.id }
	});
	const link = `/boxes/${box.id}`;
	if (next === 'alarm') {
		await notifyManagers(
			`${box.name} is in atmosphere alarm`,
			`${describeReading(newest, box).join('; ')} (reading of ${newest.at.toISOString()}). ` +
				'New bookings of this box are refused until a reading is back under both warn levels.',
			link,
			`atmosphere-alarm:${box.id}:${newest.id}`,
			tx
		);
	} else if (box.atmosphereState === 'alarm') {
		await notifyManagers(
			`${box.name}: atmosphere alarm cleared`,
			`The newest reading is O₂ ${newest.o2Ppm} ppm, H₂O ${newest.h2oPpm} ppm; the box takes bookings again.`,
			link,
			`atmosphere-clear:${box.id}:${newest.id}`,
			tx
		);
	}
	return next;
}

function checkInstant(at: Date, now: Date) {
	if (at.getTime() > now.getTime() + FUTURE_SLACK_MS)
		throw new ServiceError(400, 'A reading cannot be in the future.', {
			fields: { at: 'The time is in the future.' }
		});
	if (at.getTime() < Date.UTC(2000, 0, 1))
		throw new ServiceError(400, 'That time is too far back.', {
			fields: { at: 'The time is before the year 2000.' }
		});
}

/** After a box's thresholds change: its state as the newest reading now calls for. */
export async function resettle(tx: Transaction, boxId: number, actorId: number) {
	return settleState(tx, await lockBox(tx, boxId), actorId);
}

/** Inserts one reading inside `tx`, whose box lock the caller holds. */
export async function insertReading(
	tx: Transaction,
	box: LockedBox,
	actorId: number,
	input: ReadingInput
) {
	const problems = checkReading(input);
	if (Object.keys(problems).length)
		throw new ServiceError(400, 'That reading is not valid.', { fields: problems });
	const now = new Date();
	// Readings are kept to the second; a reading taken "now" moves on a second if one
	// already holds this one.
	const at = new Date(Math.floor((input.at ?? now).getTime() / 1000) * 1000);
	checkInstant(at, now);
	const note = input.note?.trim() || null;
	for (let shift = 0; ; shift++) {
		const stamp = new Date(at.getTime() + shift * 1000);
		try {
			const [result] = await tx.insert(atmosphereReadings).values({
				boxId: box.id,
				at: stamp,
				o2Ppm: input.o2Ppm,
				h2oPpm: input.h2oPpm,
				source: input.source ?? 'manual',
				recordedBy: actorId,
				bookingId: input.bookingId ?? null,
				note
			});
			if (note) {
				await notifyManagers(
					`${box.name}: a problem noted with a reading`,
					`O₂ ${input.o2Ppm} ppm, H₂O ${input.h2oPpm} ppm. Note: ${note}`,
					`/boxes/${box.id}`,
					`reading-note:${result.insertId}`,
					tx
				);
			}
			return { id: result.insertId, at: stamp };
		} catch (e) {
			if (!isDuplicateKey(e)) throw e;
			if (input.at || shift >= 5)
				throw new ServiceError(409, 'This box already has a reading at that time.', {
					fields: { at: 'A reading at this second is already recorded.' }
				});
		}
	}
}

/** Runs `work` with the box locked, then settles the atmosphere state. */
export async function withReadings<T>(
	boxId: number,
	actorId: number,
	work: (tx: Transaction, box: LockedBox) => Promise<T>
): Promise<{ value: T; state: AtmosphereState }> {
	// The notices it may queue meet the outbox worker's locks; a deadlock victim runs again.
	return transaction(async (tx) => {
		const box = await lockBox(tx, boxId);
		const value = await work(tx, box);
		return { value, state: await settleState(tx, box, actorId) };
	});
}

export async function recordReading(actor: Actor, boxId: number, input: ReadingInput) {
	const { value, state } = await withReadings(boxId, actor.id, (tx, box) =>
		insertReading(tx, box, actor.id, input)
	);
	return { ...value, state };
}

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
	const parsed = parseReadingsCsv(text, { tz: config.facilityTz, now: opts.now ?? new Date() });
	if (!parsed.ok) throw new ServiceError(400, parsed.message, { fields: { file: parsed.message } });
	const { rows, rejected } = parsed;
	if (!rows.length && !rejected.length)
		throw new ServiceError(400, 'The file has a header but no readings.', {
			fields: { file: 'The file has a header but no readings.' }
		});
	const fresh = await withoutStored(boxId, rows);
	const report: ImportReport = {
		imported: false,
		accepted: fresh.length,
		duplicates: parsed.duplicatesInFile + rows.length - fresh.length,
		rejectedCount: rejected.length,
		rejected: rejected.slice(0, MAX_REJECTED_LISTED)
	};
	if (rejected.length && !opts.skipRejected) return report;
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
			details: { stored, duplicates: report.duplicates, rejected: rejected.length }
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

export type Series = {
	/** Unix seconds. */
	t: number[];
	o2: number[];
	h2o: number[];
	/** 0 when every reading is shown; else each point is the highest of this many seconds. */
	bucketSeconds: number;
};

/**
 * Readings of a box between two instants for a chart. Past `maxPoints`, readings are
 * grouped into equal intervals and each keeps its highest O2 and H2O, so no excursion
 * above a threshold is hidden by the thinning.
 */
export async function readingSeries(
	boxId: number,
	from: Date,
	to: Date,
	maxPoints = 2_000
): Promise<Series> {
	const inRange = and(
		eq(atmosphereReadings.boxId, boxId),
		gte(atmosphereReadings.at, from),
		lte(atmosphereReadings.at, to)
	);
	const [{ n }] = await db.select({ n: count() }).from(atmosphereReadings).where(inRange);
	const series: Series = { t: [], o2: [], h2o: [], bucketSeconds: 0 };
	if (n <= maxPoints) {
		const rows = await db
			.select({
				at: atmosphereReadings.at,
				o2: atmosphereReadings.o2Ppm,
				h2o: atmosphereReadings.h2oPpm
			})
			.from(atmosphereReadings)
			.where(inRange)
			.orderBy(asc(atmosphereReadings.at));
		for (const r of rows) {
			series.t.push(r.at.getTime() / 1000);
			series.o2.push(r.o2);
			series.h2o.push(r.h2o);
		}
		return series;
	}
	const span = (to.getTime() - from.getTime()) / 1000;
	const bucket = Math.max(60, Math.ceil(span / maxPoints));
	const start = Math.floor(from.getTime() / 1000);
	// TIMESTAMPDIFF on DATETIME values does not depend on the session's time zone.
	const origin = new Date(start * 1000);
	const slot = sql<number>`FLOOR(TIMESTAMPDIFF(SECOND, ${origin}, ${atmosphereReadings.at}) / ${bucket})`;
	const rows = await db
		.select({
			slot,
			o2: sql<string>`MAX(${atmosphereReadings.o2Ppm})`,
			h2o: sql<string>`MAX(${atmosphereReadings.h2oPpm})`
		})
		.from(atmosphereReadings)
		.where(inRange)
		.groupBy(slot)
		.orderBy(slot);
	for (const r of rows) {
		series.t.push(start + Number(r.slot) * bucket);
		series.o2.push(Number(r.o2));
		series.h2o.push(Number(r.h2o));
	}
	series.bucketSeconds = bucket;
	return series;
}

/** The newest readings of a box, for its page. */
export async function latestReadings(boxId: number, limit = 10) {
	return db
		.select()
		.from(atmosphereReadings)
		.where(eq(atmosphereReadings.boxId, boxId))
		.orderBy(desc(atmosphereReadings.at))
		.limit(limit);
}
