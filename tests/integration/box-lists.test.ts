// The lists a person pages through on a box's pages and the outbox: sorted, filtered and
// paged in SQL with the total, never cut off. The services are called directly against the
// test database; the pages are read through the app.
import { afterAll, describe, expect, it } from 'vitest';
import { randomBytes } from 'node:crypto';
import {
	atmosphereReadings,
	leakTests,
	maintenanceLog,
	maintenanceTasks,
	outages,
	outbox
} from '../../src/lib/server/db/schema';
import { readListQuery, type ListSpec } from '../../src/lib/domain/listing';
import { readDayRange } from '../../src/lib/validation/day-range';
import { pool } from '../../src/lib/server/db';
import { boxOutages, boxOutagesList } from '../../src/lib/server/services/boxes';
import { leakTestList, leakTestPage } from '../../src/lib/server/services/leak-tests';
import { outboxList, outboxPage } from '../../src/lib/server/services/notifications';
import { readingCount, readingsList, readingsOf } from '../../src/lib/server/services/reading-list';
import { maintenanceHistory, upkeepLogList } from '../../src/lib/server/services/upkeep-log';
import { closeTestDb, makeBox, makeUser, testDb } from '../support/db';
import { signedIn } from '../support/http';

afterAll(async () => {
	await closeTestDb();
	await pool.end();
});

/** A list's query as the address would give it. */
const query = <S extends string, F extends string>(spec: ListSpec<S, F>, params = '') =>
	readListQuery(new URLSearchParams(params), spec);

/** Noon UTC on a fixed day of March 2025 plus `minutes`: a clock of the test's own. */
const at = (day: number, minutes = 0) =>
	new Date(Date.UTC(2025, 2, day, 12, 0, 0) + minutes * 60_000);

const sources = ['manual', 'check_in', 'check_out', 'csv'] as const;

/** 60 readings, one per hour from 1 March 12:00 UTC; O2 rises with the index, H2O falls. */
async function boxWithReadings() {
	const boxId = await makeBox();
	const recorder = await makeUser('member');
	await testDb()
		.insert(atmosphereReadings)
		.values(
			Array.from({ length: 60 }, (_, i) => ({
				boxId,
				at: at(1, i * 60),
				o2Ppm: Number((0.1 + i / 100).toFixed(3)),
				h2oPpm: Number((5 - i / 20).toFixed(3)),
				source: sources[i % 4],
				recordedBy: recorder.id
			}))
		);
	return boxId;
}

describe('a box’s readings, paged in SQL', () => {
	it('counts every reading and pages newest first, a page past the end showing the last', async () => {
		const boxId = await boxWithReadings();
		expect(await readingCount(boxId)).toBe(60);

		const first = await readingsOf(boxId, query(readingsList));
		expect(first.view).toMatchObject({ total: 60, pages: 2, page: 1, perPage: 50 });
		expect(first.rows).toHaveLength(50);
		expect(first.rows[0].at).toEqual(at(1, 59 * 60));
		expect(first.rows[0].byName).toBe('Test member');

		const past = await readingsOf(boxId, query(readingsList, 'page=9'));
		expect(past.view.page).toBe(2);
		expect(past.rows).toHaveLength(10);
		expect(past.rows.at(-1)!.at).toEqual(at(1));
		// The two pages together hold every reading once.
		const ids = new Set([...first.rows, ...past.rows].map((r) => r.id));
		expect(ids.size).toBe(60);
	});

	it('sorts by O₂ or H₂O either way', async () => {
		const boxId = await boxWithReadings();
		const o2 = (await readingsOf(boxId, query(readingsList, 'sort=o2&dir=desc'))).rows;
		expect(o2[0].o2Ppm).toBeCloseTo(0.69, 3);
		expect(o2.map((r) => r.o2Ppm)).toEqual([...o2.map((r) => r.o2Ppm)].sort((a, b) => b - a));
		const h2o = (await readingsOf(boxId, query(readingsList, 'sort=h2o&dir=asc'))).rows;
		expect(h2o[0].h2oPpm).toBeCloseTo(2.05, 3);
		// A column that cannot be sorted by falls back to the newest first.
		const odd = await readingsOf(boxId, query(readingsList, 'sort=note'));
		expect(odd.view).toMatchObject({ sort: 'at', dir: 'desc' });
	});

	it('filters by source and by whole days on the facility clock', async () => {
		const boxId = await boxWithReadings();
		const csv = await readingsOf(boxId, query(readingsList, 'source=csv'));
		expect(csv.view.total).toBe(15);
		expect(csv.rows.every((r) => r.source === 'csv')).toBe(true);
		// An unknown source is ignored, not refused.
		expect((await readingsOf(boxId, query(readingsList, 'source=guess'))).view.total).toBe(60);

		// 1 March 12:00 UTC to 3 March 23:00 UTC: on Berlin's clock (UTC+1) 2 March holds the
		// readings from 1 March 23:00 UTC to 2 March 22:00 UTC, 24 of them.
		const days = readDayRange(
			new URLSearchParams('from=2025-03-02&to=2025-03-02'),
			'Europe/Berlin'
		);
		const one = await readingsOf(boxId, query(readingsList), days);
		expect(one.view.total).toBe(24);
		expect(one.rows.at(-1)!.at).toEqual(new Date('2025-03-01T23:00:00Z'));
		expect(one.rows[0].at).toEqual(new Date('2025-03-02T22:00:00Z'));
	});
});

describe('the readings page', () => {
	it('shows a member every reading with the total, keeps its sort, and names a bad day', async () => {
		const boxId = await boxWithReadings();
		const member = await signedIn(await makeUser('member'));
		const box = await (await member.get(`/boxes/${boxId}`)).text();
		expect(box).toContain(`href="/boxes/${boxId}/readings"`);
		expect(box).toContain('All readings (60)');

		const page = await member.get(`/boxes/${boxId}/readings?sort=o2&dir=desc`);
		expect(page.status).toBe(200);
		const html = await page.text();
		expect(html).toContain('1–50 of 60');
		expect(html).toContain('aria-sort="descending"');
		// The sort survives in the pager's link to the next page.
		expect(html).toContain('href="?sort=o2&amp;dir=desc&amp;page=2"');

		const bad = await member.get(`/boxes/${boxId}/readings?from=2025-02-30`);
		expect(bad.status).toBe(200);
		expect(await bad.text()).toContain('Give the first day as a date');
	});
});

describe('leak tests, upkeep and outages of a box', () => {
	it('pages a box’s leak tests with the total, sorted by rate, passed or failed', async () => {
		const boxId = await makeBox();
		await testDb()
			.insert(leakTests)
			.values(
				Array.from({ length: 30 }, (_, i) => ({
					boxId,
					method: i % 2 ? ('oxygen' as const) : ('pressure' as const),
					inputs: { minutes: 60 },
					hourlyLeakRate: (i + 1) * 1e-4,
					isoClass: i < 10 ? 1 : 2,
					requiredClass: 1,
					passed: i < 10,
					testedAt: at(1, i * 1440)
				}))
			);
		const all = await leakTestPage(boxId, query(leakTestList));
		expect(all.view).toMatchObject({ total: 30, pages: 2 });
		expect(all.rows[0].testedAt).toEqual(at(1, 29 * 1440));

		const failed = await leakTestPage(boxId, query(leakTestList, 'result=fail&sort=rate&dir=asc'));
		expect(failed.view.total).toBe(20);
		expect(failed.rows[0].hourlyLeakRate).toBeCloseTo(11e-4, 8);
		expect(failed.rows.every((t) => !t.passed)).toBe(true);

		const oxygen = await leakTestPage(boxId, query(leakTestList, 'method=oxygen&page=5'));
		expect(oxygen.view).toMatchObject({ total: 15, page: 1 });
	});

	it('pages the upkeep log, by kind and by words in the task or the note', async () => {
		const boxId = await makeBox();
		const db = testDb();
		// Retired and far from due, so the scheduler never mails about them.
		const task = async (kind: 'purifier_regeneration' | 'pump_oil', title: string) =>
			(
				await db
					.insert(maintenanceTasks)
					.values({
						boxId,
						kind,
						title,
						intervalDays: 30,
						nextDueAt: new Date(Date.UTC(2099, 0, 1)),
						active: false
					})
					.$returningId()
			)[0].id;
		const purifier = await task('purifier_regeneration', 'Regenerate the purifier');
		const oil = await task('pump_oil', 'Change the pump oil');
		await db.insert(maintenanceLog).values([
			...Array.from({ length: 27 }, (_, i) => ({
				taskId: purifier,
				doneAt: at(1, i * 1440),
				note: i === 3 ? 'Column swapped for a spare' : null
			})),
			{ taskId: oil, doneAt: at(20), note: 'Oil was dark' }
		]);

		const all = await maintenanceHistory(boxId, query(upkeepLogList));
		expect(all.view).toMatchObject({ total: 28, pages: 2 });
		expect(all.rows).toHaveLength(25);
		const kind = await maintenanceHistory(boxId, query(upkeepLogList, 'kind=pump_oil'));
		expect(kind.rows.map((r) => r.title)).toEqual(['Change the pump oil']);
		const words = await maintenanceHistory(boxId, query(upkeepLogList, 'q=column+SPARE'));
		expect(words.view.total).toBe(1);
		expect(words.rows[0].doneAt).toEqual(at(4));
		// A % in the search is a character, not a wildcard.
		expect((await maintenanceHistory(boxId, query(upkeepLogList, 'q=%25'))).view.total).toBe(0);
		const byTask = await maintenanceHistory(boxId, query(upkeepLogList, 'sort=task&dir=asc'));
		expect(byTask.rows[0].title).toBe('Change the pump oil');
	});

	it('pages a box’s outages, planned ones first, none left out', async () => {
		const boxId = await makeBox();
		await testDb()
			.insert(outages)
			.values(
				Array.from({ length: 13 }, (_, i) => ({
					boxId,
					startAt: at(1, i * 1440),
					endAt: at(1, i * 1440 + 120),
					kind: 'other' as const,
					reason: `Outage ${i}`
				}))
			);
		const first = await boxOutages(boxId, query(boxOutagesList));
		expect(first.view).toMatchObject({ total: 13, pages: 2 });
		expect(first.rows[0].reason).toBe('Outage 12');
		const last = await boxOutages(boxId, query(boxOutagesList, 'outages.page=7'));
		expect(last.view.page).toBe(2);
		expect(last.rows.map((o) => o.reason)).toEqual(['Outage 2', 'Outage 1', 'Outage 0']);
	});
});

describe('the outbox, paged in SQL', () => {
	it('finds messages by recipient or subject, filters by state and sorts by attempts', async () => {
		const token = `list${randomBytes(4).toString('hex')}`;
		// Sent or failed: states the worker leaves alone.
		await testDb()
			.insert(outbox)
			.values(
				Array.from({ length: 7 }, (_, i) => ({
					toAddress: i === 0 ? `${token}@test.example` : `someone${i}@test.example`,
					kind: 'staff_notice',
					subject: i === 0 ? 'Plain subject' : `Report ${token} ${i}`,
					textBody: 'x',
					htmlBody: '<p>x</p>',
					dedupeKey: `test:${token}:${i}`,
					status: i % 2 ? ('failed' as const) : ('sent' as const),
					attempts: i,
					nextAttemptAt: new Date(Date.now() + 86_400_000)
				}))
			);
		const found = await outboxPage(query(outboxList, `q=${token}`));
		expect(found.view.total).toBe(7);
		expect(found.rows[0].subject).toBe(`Report ${token} 6`);

		const failed = await outboxPage(query(outboxList, `q=${token}&status=failed`));
		expect(failed.view.total).toBe(3);
		expect(failed.rows.every((r) => r.status === 'failed')).toBe(true);

		const byAttempts = await outboxPage(query(outboxList, `q=${token}&sort=attempts&dir=asc`));
		expect(byAttempts.rows.map((r) => r.attempts)).toEqual([0, 1, 2, 3, 4, 5, 6]);

		const manager = await signedIn(await makeUser('manager'));
		const page = await (await manager.get(`/manage/outbox?q=${token}&status=failed`)).text();
		expect(page).toContain(`Report ${token} 5`);
		expect(page).not.toContain(`Report ${token} 4`);
	});
});
