import { afterAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { DateTime } from 'luxon';
import {
	bookings,
	boxes,
	boxPorts,
	gloveInspections,
	gloves,
	outages
} from '../../src/lib/server/db/schema';
import { closeTestDb, makeBox, makeGroup, makeUser, testDb } from '../support/db';
import { Client, signedIn } from '../support/http';
import { facilityTz } from '../support/time';

afterAll(closeTestDb);

const DAY_MS = 86_400_000;

/** Monday 00:00 of last week on the facility clock: a whole week, all of it in the past. */
const lastMonday = () => DateTime.now().setZone(facilityTz).startOf('week').minus({ weeks: 1 });
const on = (day: number, hour: number, minute = 0) =>
	lastMonday().plus({ days: day }).set({ hour, minute }).toJSDate();
const hoursAfter = (at: Date, h: number) => new Date(at.getTime() + h * 3_600_000);

async function book(
	boxId: number,
	userId: number,
	startAt: Date,
	endAt: Date,
	extra: Partial<typeof bookings.$inferInsert> = {}
) {
	await testDb()
		.insert(bookings)
		.values({
			boxId,
			userId,
			startAt,
			endAt,
			blockedUntil: endAt,
			purpose: 'Report check',
			status: 'completed',
			...extra
		});
}

async function nameOf(boxId: number) {
	const [row] = await testDb().select({ name: boxes.name }).from(boxes).where(eq(boxes.id, boxId));
	return row.name;
}

/** The visible text of some HTML, comments and tags dropped, spaces collapsed. */
const text = (html: string) =>
	html
		.replace(/<!--[\s\S]*?-->/g, '')
		.replace(/<[^>]*>/g, ' ')
		.replace(/&nbsp;/g, ' ')
		.replace(/\s+/g, ' ')
		.trim();

/** The one row of the table `testId` whose HTML matches. */
function row(html: string, testId: string, match: (rowHtml: string) => boolean): string {
	const start = html.indexOf(`data-testid="${testId}"`);
	expect(start, `table ${testId}`).toBeGreaterThan(-1);
	const rows = html
		.slice(start, html.indexOf('</table>', start))
		.split(/<tr\b/)
		.slice(1)
		.map((r) => `<tr${r}`)
		.filter(match);
	expect(rows, `one row in ${testId}`).toHaveLength(1);
	return text(rows[0]);
}

async function reportPage(client: Client, weeks: number | string, gloveBox?: string) {
	// The glove wear list pages; a box of this test is found by its name among the run's many.
	const search = gloveBox ? `&gloves.q=${encodeURIComponent(gloveBox)}` : '';
	const response = await client.get(`/reports?weeks=${weeks}${search}`);
	expect(response.status).toBe(200);
	return response.text();
}

describe('reports', () => {
	it('shows utilisation, group hours, rates, outage hours and glove wear for a box', async () => {
		const boxId = await makeBox({ cancelWindowHours: 24 });
		const box = await nameOf(boxId);
		const group = await makeGroup('reports');
		const member = await makeUser('member', { group: group.id });
		const manager = await signedIn(await makeUser('manager'));

		// Last week: 3 h completed and 2 h no-show for the group, 4 h cancelled by the booker
		// 2 h before the start (late: billed as booked), 2 h cancelled for the leak (never
		// counts), and 1.5 h completed with no group billed.
		const g = { groupId: group.id };
		await book(boxId, member.id, on(0, 9), on(0, 12), g);
		await book(boxId, member.id, on(1, 9), on(1, 11), { ...g, status: 'no_show' });
		await book(boxId, member.id, on(2, 9), on(2, 13), {
			...g,
			status: 'cancelled',
			cancelCause: 'user',
			cancelledAt: on(2, 7),
			confirmedAt: on(-7, 9)
		});
		await book(boxId, member.id, on(3, 9), on(3, 11), {
			...g,
			status: 'cancelled',
			cancelCause: 'outage',
			cancelledAt: on(1, 16)
		});
		await book(boxId, member.id, on(4, 10), on(4, 11, 30), { groupId: null });
		await testDb()
			.insert(outages)
			.values({ boxId, startAt: on(3, 8), endAt: on(3, 12), kind: 'leak', reason: 'Report check' });

		// Gloves: one fitted 400 days ago (past the age limit) and inspected two days ago, one
		// fitted 45 days ago and never inspected since.
		const ports = await testDb()
			.select()
			.from(boxPorts)
			.where(eq(boxPorts.boxId, boxId))
			.orderBy(boxPorts.sortOrder);
		const glove = (portId: number, daysAgo: number, hand: 'left' | 'right') =>
			testDb()
				.insert(gloves)
				.values({
					portId,
					material: 'butyl',
					thicknessMm: 0.4,
					size: '8',
					hand,
					installedAt: new Date(Date.now() - daysAgo * DAY_MS)
				})
				.$returningId();
		const [old] = await glove(ports[0].id, 400, 'left');
		await glove(ports[1].id, 45, 'right');
		await testDb()
			.insert(gloveInspections)
			.values({ gloveId: old.id, at: new Date(Date.now() - 2 * DAY_MS), damaged: false });

		const html = await reportPage(manager, 4, box);
		expect(html).toContain('href="/reports"');
		expect(text(html)).toContain('4 ISO weeks');

		// Booked: 3 + 2 + 1.5 = 6.5 h over the real hours of last week (168, or 167/169).
		const weekHours = lastMonday().plus({ weeks: 1 }).diff(lastMonday(), 'hours').hours;
		const util = row(html, 'utilisation-table', (r) => r.includes(box));
		expect(util).toContain(`${((6.5 / weekHours) * 100).toFixed(1)} % 6.50 h 4.00 h out`);
		expect(util).toContain('6.50 of');

		// The group: 5 h booked, 4 h late cancelled, 9 h billed as booked, over 3 bookings.
		expect(row(html, 'groups-table', (r) => r.includes(group.name))).toBe(
			`${group.name} 3 5.00 4.00 9.00`
		);

		// Due: 2 completed + 1 no-show → 1 of 3. Bookings: 4 (not the outage's) → 1 late of 4.
		expect(row(html, 'rates-table', (r) => r.includes(box))).toBe(`${box} 3 1 33.3 % 4 1 25.0 %`);

		expect(row(html, 'outages-table', (r) => r.includes('Leak'))).toContain(`${box} 4.00 h`);

		// Worn hours are confirmed and completed ones: 3 + 1.5 = 4.5 h on each glove.
		const oldRow = row(html, 'gloves-table', (r) => r.includes(`data-port="${ports[0].id}"`));
		expect(oldRow).toContain('400 4.50');
		expect(oldRow).toContain('✕ Replace');
		expect(oldRow).toContain('11 months or older');
		const youngRow = row(html, 'gloves-table', (r) => r.includes(`data-port="${ports[1].id}"`));
		expect(youngRow).toContain('45 4.50 none 4.50');
		expect(youngRow).toContain('▲ Inspect');
		expect(youngRow).toContain('Not inspected since it was fitted 45 days ago.');
	});

	it('counts a booking across a week boundary in both weeks, and follows the range picked', async () => {
		const boxId = await makeBox();
		const box = await nameOf(boxId);
		const member = await makeUser('member');
		const manager = await signedIn(await makeUser('manager'));
		// Two real hours either side of last Monday 00:00, and 3 h nine weeks back.
		const boundary = lastMonday().toJSDate();
		await book(boxId, member.id, hoursAfter(boundary, -2), hoursAfter(boundary, 2));
		const old = lastMonday().minus({ weeks: 8 }).plus({ days: 2 }).set({ hour: 9 }).toJSDate();
		await book(boxId, member.id, old, hoursAfter(old, 3));

		const four = row(await reportPage(manager, 4), 'utilisation-table', (r) => r.includes(box));
		expect(four.match(/ 2\.00 h/g)).toHaveLength(2);
		expect(four).toContain('4.00 of');
		const twelve = row(await reportPage(manager, 12), 'utilisation-table', (r) => r.includes(box));
		expect(twelve.match(/ 2\.00 h/g)).toHaveLength(2);
		expect(twelve).toContain(' 3.00 h');
		expect(twelve).toContain('7.00 of');

		// A range not on offer falls back to eight weeks.
		expect(text(await reportPage(manager, 5))).toContain('8 ISO weeks');
	});

	it('is for managers only', async () => {
		const member = await signedIn(await makeUser('member'));
		expect((await member.get('/reports?weeks=8')).status).toBe(403);
		expect(await (await member.get('/')).text()).not.toContain('href="/reports"');
		const trainer = await signedIn(await makeUser('trainer'));
		expect((await trainer.get('/reports')).status).toBe(403);
		const anonymous = await new Client().get('/reports');
		expect(anonymous.status).toBe(303);
		expect(anonymous.headers.get('location')).toContain('/signin');
		const admin = await signedIn(await makeUser('admin'));
		expect((await admin.get('/reports')).status).toBe(200);
	});
});
