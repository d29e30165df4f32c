// The atmosphere chart's bucketed series and the readings export, over a year of one-minute
// readings for one box (525,600 rows). Dates are fixed in 2025, wholly in the past.
import { sql } from 'drizzle-orm';
import { DateTime } from 'luxon';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bucketOf, bucketPlan, MAX_POINTS, type Series } from '../../src/lib/domain/readings-chart';
import { closeTestDb, makeBox, makeUser, testDb } from '../support/db';
import { Client, errorOf, signedIn } from '../support/http';
import { facilityTz } from '../support/time';

afterAll(closeTestDb);

const YEAR_START = Date.UTC(2025, 0, 1);
const ROWS = 525_600; // 365 days of minutes
const O2_SPIKE = { seq: 200_003, ppm: 55.5 };
const H2O_SPIKE = { seq: 400_001, ppm: 33.3 };
// What the seeding statement stores for each minute (DECIMAL, so to the hundredth exactly).
const hundredths = (x: number) => Math.round(x * 100) / 100;
const o2Of = (seq: number) =>
	seq === O2_SPIKE.seq ? O2_SPIKE.ppm : hundredths(0.3 + (seq % 41) / 100);
const h2oOf = (seq: number) =>
	seq === H2O_SPIKE.seq ? H2O_SPIKE.ppm : hundredths(0.2 + (seq % 37) / 100);
const iso = (ms: number) => new Date(ms).toISOString();

/** A year of minute readings: MariaDB's Sequence engine in one INSERT … SELECT, else batches. */
async function seedYear(boxId: number) {
	try {
		await testDb().execute(sql`
			INSERT INTO atmosphere_readings (box_id, at, o2_ppm, h2o_ppm, source)
			SELECT ${boxId}, TIMESTAMP '2025-01-01 00:00:00' + INTERVAL seq MINUTE,
			       IF(seq = ${O2_SPIKE.seq}, ${O2_SPIKE.ppm}, 0.3 + (seq MOD 41) / 100),
			       IF(seq = ${H2O_SPIKE.seq}, ${H2O_SPIKE.ppm}, 0.2 + (seq MOD 37) / 100),
			       'csv'
			FROM seq_0_to_525599`);
	} catch (e) {
		const err = e as { code?: string; cause?: { code?: string } };
		if ((err.cause?.code ?? err.code) !== 'ER_NO_SUCH_TABLE') throw e;
		for (let i = 0; i < ROWS; i += 10_000) {
			const rows = [];
			for (let seq = i; seq < Math.min(ROWS, i + 10_000); seq++)
				rows.push(
					sql`(${boxId}, ${iso(YEAR_START + seq * 60_000)
						.slice(0, 19)
						.replace('T', ' ')}, ${o2Of(seq)}, ${h2oOf(seq)}, 'csv')`
				);
			await testDb().execute(
				sql`INSERT INTO atmosphere_readings (box_id, at, o2_ppm, h2o_ppm, source) VALUES ${sql.join(rows, sql`, `)}`
			);
		}
	}
}

let boxId: number;
let member: Client;

beforeAll(async () => {
	boxId = await makeBox();
	member = await signedIn(await makeUser('member'));
	await seedYear(boxId);
}, 180_000);

const series = async (from: number, to: number) => {
	const r = await member.get(`/api/boxes/${boxId}/readings?from=${iso(from)}&to=${iso(to)}`);
	expect(r.status).toBe(200);
	return (await r.json()) as Series;
};

describe('the bucketed readings series', () => {
	it('draws a year of minute readings from at most the cap of per-bucket lowest and highest, equal to a plain aggregate of the same rows', async () => {
		const from = YEAR_START;
		const to = YEAR_START + ROWS * 60_000;
		const s = await series(from, to);
		expect(s.count).toBe(ROWS);
		expect(s.bucketSeconds).toBeGreaterThan(0);
		expect(s.t.length).toBeLessThanOrEqual(MAX_POINTS);
		expect(s.latest).toEqual({ t: (to - 60_000) / 1000, o2: o2Of(ROWS - 1), h2o: h2oOf(ROWS - 1) });

		// The same rows read plainly and aggregated here, bucket by bucket.
		const plan = bucketPlan(new Date(from), new Date(to), facilityTz);
		expect(plan.bucketSeconds).toBe(s.bucketSeconds);
		const [rows] = (await testDb().execute(
			sql`SELECT DATE_FORMAT(at, '%Y-%m-%dT%H:%i:%sZ') AS at, o2_ppm AS o2, h2o_ppm AS h2o FROM atmosphere_readings WHERE box_id = ${boxId} ORDER BY at`
		)) as unknown as [{ at: string; o2: string; h2o: string }[]];
		expect(rows.length).toBe(ROWS);
		const plain = new Map<number, { o2: number[]; h2o: number[] }>();
		for (const r of rows) {
			const slot = bucketOf(Date.parse(r.at) / 1000, plan);
			const b = plain.get(slot) ?? { o2: [Infinity, -Infinity], h2o: [Infinity, -Infinity] };
			const o2 = Number(r.o2);
			const h2o = Number(r.h2o);
			b.o2 = [Math.min(b.o2[0], o2), Math.max(b.o2[1], o2)];
			b.h2o = [Math.min(b.h2o[0], h2o), Math.max(b.h2o[1], h2o)];
			plain.set(slot, b);
		}
		expect(s.t.length).toBe(plain.size);
		s.t.forEach((t, i) => {
			const b = plain.get(bucketOf(t, plan));
			expect(b, `bucket at ${iso(t * 1000)}`).toBeDefined();
			expect([s.o2Min[i], s.o2[i], s.h2oMin[i], s.h2o[i]]).toEqual([...b!.o2, ...b!.h2o]);
		});

		// The spikes survive the bucketing, each in the bucket that holds its minute.
		const spikeAt = (seq: number) => (YEAR_START + seq * 60_000) / 1000;
		const o2Bucket = s.t.findIndex(
			(t) => t <= spikeAt(O2_SPIKE.seq) && spikeAt(O2_SPIKE.seq) < t + s.bucketSeconds
		);
		expect(s.o2[o2Bucket]).toBe(O2_SPIKE.ppm);
		expect(Math.max(...s.o2)).toBe(O2_SPIKE.ppm);
		expect(Math.max(...s.h2o)).toBe(H2O_SPIKE.ppm);
	}, 120_000);

	it('gives the readings themselves for a short range, and buckets on the facility clock for long ones', async () => {
		const day = await series(YEAR_START + 100 * 86_400_000, YEAR_START + 101 * 86_400_000);
		expect(day.bucketSeconds).toBe(0);
		expect(day.t.length).toBe(1_440);
		expect(day.o2).toEqual(day.o2Min);

		const month = await series(YEAR_START, YEAR_START + 30 * 86_400_000);
		expect(month.bucketSeconds).toBe(1_800);
		expect(month.t.length).toBeLessThanOrEqual(MAX_POINTS);
		for (const t of month.t) {
			// Every bucket begins on a half hour of the facility's wall clock.
			expect(DateTime.fromSeconds(t, { zone: facilityTz }).minute % 30).toBe(0);
		}
	});

	it('refuses bad and overlong ranges in the error shape', async () => {
		const bad = await member.get(`/api/boxes/${boxId}/readings?from=last-week`);
		expect(bad.status).toBe(400);
		expect((await errorOf(bad)).details).toMatchObject({ fields: { from: expect.any(String) } });
		const long = await member.get(`/api/boxes/${boxId}/readings?from=2020-01-01&to=2025-01-01`);
		expect(long.status).toBe(400);
		expect((await errorOf(long)).details).toEqual({ fields: { from: 'That range is too long.' } });
		const missing = await member.get('/api/boxes/999999/readings');
		expect((await errorOf(missing)).code).toBe('not_found');
	});
});

describe('the readings export', () => {
	it('writes every reading of a month as CSV in pages, in order, with the facility offset', async () => {
		// March 2025 on the facility clock, across the change to summer time.
		const r = await member.get(`/api/boxes/${boxId}/readings/export?from=2025-03-01&to=2025-03-31`);
		expect(r.status).toBe(200);
		expect(r.headers.get('content-type')).toMatch(/^text\/csv/);
		expect(r.headers.get('content-disposition')).toMatch(
			/^attachment; filename="[A-Za-z0-9-]+-readings-2025-03-01-to-2025-03-31\.csv"$/
		);
		const lines = (await r.text()).split('\r\n').filter(Boolean);
		expect(lines[0]).toBe('time,o2_ppm,h2o_ppm,source,note');
		const from = DateTime.fromISO('2025-03-01', { zone: facilityTz });
		const to = DateTime.fromISO('2025-04-01', { zone: facilityTz });
		expect(lines.length - 1).toBe(to.diff(from, 'minutes').minutes);
		const times = lines.slice(1).map((l) => Date.parse(l.split(',')[0]));
		expect(times.every((t, i) => i === 0 || t - times[i - 1] === 60_000)).toBe(true);
		expect(times[0]).toBe(from.toMillis());
		// A line written as luxon writes the same instant in the facility zone.
		const seq = (times[5_000] - YEAR_START) / 60_000;
		expect(lines[5_001]).toBe(
			`${DateTime.fromMillis(times[5_000], { zone: facilityTz }).toISO({ suppressMilliseconds: true })},${o2Of(seq)},${h2oOf(seq)},csv,`
		);
	}, 60_000);

	it("without a start, exports from the box's first reading and names the file for it", async () => {
		const r = await member.get(`/api/boxes/${boxId}/readings/export?to=2025-01-02`);
		expect(r.status).toBe(200);
		expect(r.headers.get('content-disposition')).toMatch(
			/-readings-2025-01-01-to-2025-01-02\.csv"$/
		);
		const lines = (await r.text()).split('\r\n').filter(Boolean);
		const end = DateTime.fromISO('2025-01-03', { zone: facilityTz }).toMillis();
		expect(lines.length - 1).toBe((end - YEAR_START) / 60_000);
		expect(Date.parse(lines[1].split(',')[0])).toBe(YEAR_START);
	});

	it('refuses a bad range, an unknown box and a stranger', async () => {
		const empty = await member.get(
			`/api/boxes/${boxId}/readings/export?from=2025-03-02&to=2025-03-01`
		);
		expect(empty.status).toBe(400);
		expect((await errorOf(empty)).details).toEqual({
			fields: { to: 'The end must be after the start.' }
		});
		const bad = await member.get(`/api/boxes/${boxId}/readings/export?to=2025-02-30`);
		expect(bad.status).toBe(400);
		expect((await errorOf(bad)).code).toBe('invalid_input');
		const missing = await member.get('/api/boxes/999999/readings/export');
		expect(missing.status).toBe(404);
		const stranger = await new Client().get(`/api/boxes/${boxId}/readings/export`);
		expect(stranger.status).toBe(401);
	});
});
