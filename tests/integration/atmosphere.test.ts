import { afterAll, describe, expect, it } from 'vitest';
import { and, count, eq, like } from 'drizzle-orm';
import { atmosphereReadings, bookings, boxes, outbox } from '../../src/lib/server/db/schema';
import { renderRow } from '../../src/lib/server/mail/render';
import { certifiedMemberAndBox, closeTestDb, makeBox, makeUser, testDb } from '../support/db';
import { errorOf, signedIn } from '../support/http';
import { slot } from '../support/time';

afterAll(closeTestDb);

const readingsOf = async (boxId: number) =>
	(
		await testDb()
			.select({ n: count() })
			.from(atmosphereReadings)
			.where(eq(atmosphereReadings.boxId, boxId))
	)[0].n;

const stateOf = async (boxId: number) =>
	(await testDb().select({ s: boxes.atmosphereState }).from(boxes).where(eq(boxes.id, boxId)))[0].s;

/** A log of `rows` readings one minute apart, ending an hour ago. */
function sensorLog(rows: number, o2 = (i: number) => 0.3 + (i % 7) / 10) {
	const end = Math.floor(Date.now() / 60_000) * 60_000 - 3_600_000;
	const lines = ['time,O2 ppm,H2O ppm'];
	for (let i = 0; i < rows; i++) {
		const at = new Date(end - (rows - 1 - i) * 60_000).toISOString();
		lines.push(`${at},${o2(i).toFixed(2)},${(0.2 + (i % 5) / 10).toFixed(2)}`);
	}
	return lines.join('\n') + '\n';
}

const postCsv = (
	client: Awaited<ReturnType<typeof signedIn>>,
	boxId: number,
	csv: string,
	q = ''
) =>
	client.request('POST', `/api/boxes/${boxId}/readings/import${q}`, csv, {
		'content-type': 'text/csv'
	});

describe('manual readings', () => {
	it('records a reading and refuses impossible ones with field messages', async () => {
		const boxId = await makeBox();
		const member = await signedIn(await makeUser('member'));
		const ok = await member.post(`/api/boxes/${boxId}/readings`, { o2Ppm: 0.4, h2oPpm: 0.6 });
		expect(ok.status).toBe(201);
		expect((await ok.json()).atmosphereState).toBe('ok');

		const negative = await member.post(`/api/boxes/${boxId}/readings`, { o2Ppm: -2, h2oPpm: 0.6 });
		expect(negative.status).toBe(400);
		expect((await errorOf(negative)).details).toEqual({
			fields: { o2Ppm: 'O₂ cannot be negative.' }
		});
		const future = await member.post(`/api/boxes/${boxId}/readings`, {
			at: new Date(Date.now() + 86_400_000).toISOString(),
			o2Ppm: 1,
			h2oPpm: 1
		});
		expect(future.status).toBe(400);
		expect((await errorOf(future)).details).toEqual({
			fields: { at: 'The time is in the future.' }
		});
		const text = await member.post(`/api/boxes/${boxId}/readings`, { o2Ppm: 'high', h2oPpm: 1 });
		expect(text.status).toBe(400);
		expect(
			(await errorOf(await member.post('/api/boxes/999999/readings', { o2Ppm: 1, h2oPpm: 1 }))).code
		).toBe('not_found');
		expect(await readingsOf(boxId)).toBe(1);
	});

	it('puts the box in alarm above its alarm level, refuses bookings, tells managers, and clears under warn', async () => {
		const { user, boxId } = await certifiedMemberAndBox({ o2WarnPpm: 1, o2AlarmPpm: 10 });
		const member = await signedIn(user);
		const high = await member.post(`/api/boxes/${boxId}/readings`, { o2Ppm: 25, h2oPpm: 0.5 });
		expect((await high.json()).atmosphereState).toBe('alarm');

		const booking = await member.post('/api/bookings', { boxId, ...slot(2, 10), purpose: 'Test' });
		expect(booking.status).toBe(422);
		const refusal = await errorOf(booking);
		expect(
			(refusal.details as { reasons: { code: string }[] }).reasons.map((r) => r.code)
		).toContain('atmosphere_alarm');
		const [{ n: told }] = await testDb()
			.select({ n: count() })
			.from(outbox)
			.where(
				and(
					like(outbox.subject, '% is in atmosphere alarm'),
					like(outbox.dedupeKey, `atmosphere-alarm:${boxId}:%`)
				)
			);
		expect(told).toBeGreaterThan(0);

		// Between warn and alarm the alarm stands; under warn it clears.
		const page = await member.get(`/boxes/${boxId}`);
		expect(await page.text()).toContain('atmosphere alarm');
		const between = await member.post(`/api/boxes/${boxId}/readings`, { o2Ppm: 5, h2oPpm: 0.5 });
		expect(between.status).toBe(201);
		expect(await stateOf(boxId)).toBe('alarm');
		const under = await member.post(`/api/boxes/${boxId}/readings`, { o2Ppm: 0.5, h2oPpm: 0.5 });
		expect(under.status).toBe(201);
		expect(await stateOf(boxId)).toBe('ok');
		const again = await member.post('/api/bookings', { boxId, ...slot(2, 10), purpose: 'Test' });
		expect(again.status).toBe(201);
	});
});

describe('CSV import', () => {
	it('imports 50,000 rows once; the same file again adds nothing', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const csv = sensorLog(50_000);
		const first = await postCsv(manager, boxId, csv);
		expect(first.status).toBe(201);
		expect((await first.json()).report).toMatchObject({
			imported: true,
			accepted: 50_000,
			duplicates: 0,
			rejectedCount: 0
		});
		const second = await postCsv(manager, boxId, csv);
		expect((await second.json()).report).toMatchObject({ accepted: 0, duplicates: 50_000 });
		expect(await readingsOf(boxId)).toBe(50_000);

		// A week's chart is thinned to at most 2,000 points that keep each interval's highest value.
		const series = await (await manager.get(`/api/boxes/${boxId}/readings`)).json();
		expect(series.t.length).toBeLessThanOrEqual(2_000);
		expect(series.bucketSeconds).toBeGreaterThan(0);
		expect(Math.max(...series.o2)).toBeCloseTo(0.9, 5);
	}, 120_000);

	it('thins a long range to each interval’s highest reading, inside the range asked for', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		// Three days a minute apart, flat at 0.3 ppm but for one 5 ppm reading in the middle.
		const csv = sensorLog(3 * 1440, (i) => (i === 2000 ? 5 : 0.3));
		expect((await postCsv(manager, boxId, csv)).status).toBe(201);
		const to = new Date();
		const from = new Date(to.getTime() - 30 * 86_400_000);
		const q = new URLSearchParams({ from: from.toISOString(), to: to.toISOString() });
		const series = await (await manager.get(`/api/boxes/${boxId}/readings?${q}`)).json();
		// 30 days in at most 2,000 points: intervals of at least 30 · 86 400 / 2 000 s.
		expect(series.bucketSeconds).toBeGreaterThanOrEqual(1296);
		expect(Math.max(...series.o2)).toBe(5);
		expect(Math.min(...series.o2)).toBe(0.3);
		for (const t of series.t) {
			expect(t * 1000).toBeGreaterThanOrEqual(from.getTime() - 1000);
			expect(t * 1000).toBeLessThanOrEqual(to.getTime());
		}
	});

	it('reports each rejected row and stores nothing unless told to skip them', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const future = new Date(Date.now() + 86_400_000).toISOString();
		const csv = [
			'time,O2 ppm,H2O ppm',
			'2026-11-01T10:00:00Z,0.5,0.4',
			'2026-11-01T10:01:00Z,-0.5,0.4',
			'2026-11-01T10:02:00Z,0.5,lots',
			`${future},0.5,0.4`,
			'not a time,0.5,0.4',
			'2026-11-01T10:00:00Z,0.5,0.4',
			'2026-11-01T10:03:00Z,0.6,0.4'
		].join('\n');
		const refused = await postCsv(manager, boxId, csv);
		expect(refused.status).toBe(422);
		const error = await errorOf(refused);
		expect(error.code).toBe('rows_rejected');
		expect(error.details).toEqual({
			report: {
				imported: false,
				accepted: 2,
				duplicates: 1,
				rejectedCount: 4,
				// Each reason quotes the cell as the file wrote it and names its column.
				rejected: [
					{ line: 3, reason: 'column "O2 ppm" holds "-0.5": O₂ cannot be negative.' },
					{ line: 4, reason: 'column "H2O ppm" holds "lots", which is not a number' },
					{ line: 5, reason: `column "time" holds "${future}", which is in the future` },
					{
						line: 6,
						reason: expect.stringContaining(
							'column "time" holds "not a time", which is not a date and time'
						)
					}
				]
			}
		});
		expect(await readingsOf(boxId)).toBe(0);

		const skipped = await postCsv(manager, boxId, csv, '?skipRejected=1');
		expect(skipped.status).toBe(201);
		expect((await skipped.json()).report).toMatchObject({
			imported: true,
			accepted: 2,
			rejectedCount: 4
		});
		expect(await readingsOf(boxId)).toBe(2);
	});

	it('refuses a wrong header, a binary file, an oversized body and a member', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const header = await postCsv(manager, boxId, 'when,oxygen level,water\n1,2,3\n');
		expect(header.status).toBe(400);
		expect((await errorOf(header)).message).toContain(
			'The header line "when,oxygen level,water" names no column for the time.'
		);

		const png = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 0x0d, 0xff]);
		const binary = await manager.request(
			'POST',
			`/api/boxes/${boxId}/readings/import`,
			png.toString('latin1'),
			{
				'content-type': 'text/csv'
			}
		);
		expect(binary.status).toBe(400);
		expect((await errorOf(binary)).message).toBe('That file is not a CSV text file.');

		const huge = await postCsv(manager, boxId, sensorLog(1) + 'x'.repeat(26 * 1024 * 1024));
		expect(huge.status).toBe(413);
		expect((await errorOf(huge)).code).toBe('too_large');

		const member = await signedIn(await makeUser('member'));
		expect((await postCsv(member, boxId, sensorLog(3))).status).toBe(403);
		expect(await readingsOf(boxId)).toBe(0);
	});

	it('an imported excursion above the alarm level puts the box in alarm', async () => {
		const boxId = await makeBox({ o2AlarmPpm: 10 });
		const manager = await signedIn(await makeUser('manager'));
		const report = await postCsv(
			manager,
			boxId,
			sensorLog(10, (i) => (i === 9 ? 40 : 0.4))
		);
		expect((await report.json()).report.state).toBe('alarm');
	});
});

describe('check-in and check-out', () => {
	async function bookingNow(userId: number, boxId: number, startOffsetMin: number) {
		const startAt = new Date(Math.floor(Date.now() / 60_000) * 60_000 + startOffsetMin * 60_000);
		const endAt = new Date(startAt.getTime() + 3_600_000);
		const [row] = await testDb()
			.insert(bookings)
			.values({
				boxId,
				userId,
				startAt,
				endAt,
				blockedUntil: endAt,
				purpose: 'Check test',
				status: 'confirmed'
			})
			.$returningId();
		return row.id;
	}

	it('checks in and out with readings, passes a noted problem to the managers, and refuses out of turn', async () => {
		const { user, boxId } = await certifiedMemberAndBox();
		const member = await signedIn(user);
		const id = await bookingNow(user.id, boxId, -10);

		const early = await member.post(`/api/bookings/${id}/check-out`, { o2Ppm: 0.4, h2oPpm: 0.3 });
		expect(early.status).toBe(409);
		expect((await errorOf(early)).message).toBe('Check in first.');

		const other = await signedIn(await makeUser('member'));
		expect(
			(await other.post(`/api/bookings/${id}/check-in`, { o2Ppm: 0.4, h2oPpm: 0.3 })).status
		).toBe(403);

		const checkIn = await member.post(`/api/bookings/${id}/check-in`, {
			o2Ppm: 0.4,
			h2oPpm: 0.3,
			note: 'Left glove feels tacky at the cuff'
		});
		expect(checkIn.status).toBe(201);
		const twice = await member.post(`/api/bookings/${id}/check-in`, { o2Ppm: 0.4, h2oPpm: 0.3 });
		expect((await errorOf(twice)).message).toBe('This booking is already checked in.');

		const checkOut = await member.post(`/api/bookings/${id}/check-out`, {
			o2Ppm: 0.6,
			h2oPpm: 0.5
		});
		expect(checkOut.status).toBe(201);

		const [booking] = await testDb().select().from(bookings).where(eq(bookings.id, id));
		expect(booking.checkInAt).not.toBeNull();
		expect(booking.checkOutAt).not.toBeNull();
		const readings = await testDb()
			.select()
			.from(atmosphereReadings)
			.where(eq(atmosphereReadings.bookingId, id));
		expect(readings.map((r) => r.source).sort()).toEqual(['check_in', 'check_out']);
		const notes = await testDb()
			.select()
			.from(outbox)
			.where(like(outbox.subject, `%a problem noted with a reading`));
		expect(
			notes.some((m) => renderRow(m).text.includes('Left glove feels tacky at the cuff'))
		).toBe(true);
	});

	it('opens check-in only shortly before the start, and prompts for it in the app', async () => {
		const { user, boxId } = await certifiedMemberAndBox();
		const member = await signedIn(user);
		const later = await bookingNow(user.id, boxId, 120);
		const tooEarly = await member.post(`/api/bookings/${later}/check-in`, {
			o2Ppm: 0.4,
			h2oPpm: 0.3
		});
		expect((await errorOf(tooEarly)).message).toMatch(/opens 15 minutes before/);

		const soon = await bookingNow(user.id, boxId, 5);
		const page = await (await member.get('/bookings')).text();
		expect(page).toContain(`/bookings/${soon}/check`);
		expect(page).toContain('Check in with the box');
	});
});
