// Statements, month closing and no-shows against the real database and app.
// The billing rules are the facility policy written down in src/lib/domain/usage.ts
// (common practice for shared instruments; no published source).
import { afterAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { DateTime } from 'luxon';
import {
	bookings,
	groupMemberships,
	notifications,
	researchGroups
} from '../../src/lib/server/db/schema';
import { closeTestDb, makeBox, makeGroup, makeUser, testDb } from '../support/db';
import { errorOf, signedIn } from '../support/http';
import { until } from '../support/until';

afterAll(closeTestDb);

const z = (iso: string) => new Date(iso);

type Row = Partial<typeof bookings.$inferInsert> & { startAt: Date; endAt: Date };
async function book(boxId: number, userId: number, groupId: number, row: Row) {
	const [r] = await testDb()
		.insert(bookings)
		.values({
			boxId,
			userId,
			groupId,
			blockedUntil: row.endAt,
			purpose: 'Statement test',
			status: 'confirmed',
			confirmedAt: new Date(row.startAt.getTime() - 86_400_000),
			...row
		})
		.$returningId();
	return r.id;
}

describe('monthly statement', () => {
	it('October 2025 in Europe/Berlin, worked out by hand', async () => {
		// This test's figures assume the facility zone the test run uses.
		expect(process.env.FACILITY_TZ ?? 'Europe/Berlin').toBe('Europe/Berlin');
		const group = await makeGroup('billing');
		const member = await makeUser('member', { group: group.id });
		const boxId = await makeBox({ rateInternal: 12.5, rateExternal: 30, cancelWindowHours: 24 });
		const ids = {
			// 1. Used: 7 Oct 09:00–12:00 CEST (07:00–10:00 UTC), in 09:05, out 11:35.
			//    3 h booked, 2.5 h used, 3 h billed × 12.50 = 37.50.
			used: await book(boxId, member.id, group.id, {
				startAt: z('2025-10-07T07:00:00Z'),
				endAt: z('2025-10-07T10:00:00Z'),
				status: 'completed',
				checkInAt: z('2025-10-07T07:05:00Z'),
				checkOutAt: z('2025-10-07T09:35:00Z')
			}),
			// 2. No-show: 14 Oct 14:00–16:00 CEST, freed at 14:15 when nobody had checked in.
			//    Billed for the 0.25 h it held the box: 0.25 × 12.50 = 3.125 → 3.13 (half up).
			noShow: await book(boxId, member.id, group.id, {
				startAt: z('2025-10-14T12:00:00Z'),
				endAt: z('2025-10-14T14:00:00Z'),
				blockedUntil: z('2025-10-14T12:15:00Z'),
				status: 'no_show'
			}),
			// 3. Late cancellation: 21 Oct 10:00–11:30 CEST, cancelled 2 h before (inside 24 h).
			//    1.5 h billed = 18.75.
			late: await book(boxId, member.id, group.id, {
				startAt: z('2025-10-21T08:00:00Z'),
				endAt: z('2025-10-21T09:30:00Z'),
				status: 'cancelled',
				cancelCause: 'user',
				cancelledAt: z('2025-10-21T06:00:00Z'),
				confirmedAt: z('2025-10-01T08:00:00Z')
			}),
			// 3b. Withdrawn as late, but it was never approved: not billed (1 h booked).
			withdrawn: await book(boxId, member.id, group.id, {
				startAt: z('2025-10-21T12:00:00Z'),
				endAt: z('2025-10-21T13:00:00Z'),
				status: 'cancelled',
				cancelCause: 'user',
				cancelledAt: z('2025-10-21T11:00:00Z'),
				confirmedAt: null
			}),
			// 4. Cancelled for an outage: 22 Oct, 2 h booked, never billed.
			outage: await book(boxId, member.id, group.id, {
				startAt: z('2025-10-22T08:00:00Z'),
				endAt: z('2025-10-22T10:00:00Z'),
				status: 'cancelled',
				cancelCause: 'outage',
				cancelledAt: z('2025-10-22T07:30:00Z')
			}),
			// 5. Cancelled a week ahead: 1 h booked, not billed.
			early: await book(boxId, member.id, group.id, {
				startAt: z('2025-10-28T08:00:00Z'),
				endAt: z('2025-10-28T09:00:00Z'),
				status: 'cancelled',
				cancelCause: 'user',
				cancelledAt: z('2025-10-20T08:00:00Z')
			}),
			// 6. Across midnight at the month's end: 31 Oct 22:00 CET to 1 Nov 02:00 CET
			//    (21:00–01:00 UTC; summer time ended on 26 Oct). October bills 22:00–24:00 local:
			//    2 h = 25.00; November the other 2 h.
			midnight: await book(boxId, member.id, group.id, {
				startAt: z('2025-10-31T21:00:00Z'),
				endAt: z('2025-11-01T01:00:00Z'),
				status: 'completed'
			})
		};
		// Total by hand: booked 3 + 2 + 1.5 + 1 + 2 + 1 + 2 = 12.5 h; used 2.5 h;
		// billed 3 + 0.25 + 1.5 + 2 = 6.75 h; amount 37.50 + 3.13 + 18.75 + 25.00 = 84.38.
		const pi = await signedIn(group.pi);
		const csv = await pi.get(`/api/groups/${group.id}/statements/2025-10.csv`);
		expect(csv.status).toBe(200);
		expect(csv.headers.get('content-type')).toContain('text/csv');
		const lines = (await csv.text()).trimEnd().split('\r\n');
		expect(lines[0]).toBe(
			'booking_id,box,booked_by,start,end,status,reason,booked_hours,used_hours,billed_hours,rate,amount'
		);
		const byId = (id: number) => lines.find((l) => l.startsWith(`${id},`))!.split(',');
		const amount = (id: number) => byId(id).at(-1);
		expect(amount(ids.used)).toBe('37.50');
		expect(byId(ids.used).slice(-5, -2)).toEqual(['3.00', '2.50', '3.00']);
		expect(amount(ids.noShow)).toBe('3.13');
		expect(byId(ids.noShow).slice(-5, -2)).toEqual(['2.00', '0.00', '0.25']);
		expect(amount(ids.late)).toBe('18.75');
		expect(amount(ids.outage)).toBe('0.00');
		expect(amount(ids.early)).toBe('0.00');
		expect(amount(ids.midnight)).toBe('25.00');
		expect(byId(ids.midnight)[3]).toBe('2025-10-31T22:00:00+01:00');
		const total = lines.at(-1)!.split(',');
		expect(total[0]).toBe('total');
		expect(amount(ids.withdrawn)).toBe('0.00');
		expect(total.slice(-5)).toEqual(['12.50', '2.50', '6.75', '', '84.38']);
		expect(lines).toHaveLength(1 + 7 + 1);

		// November holds the other half of the midnight booking: 2 h = 25.00.
		const november = (await (await pi.get(`/api/groups/${group.id}/statements/2025-11.csv`)).text())
			.trimEnd()
			.split('\r\n');
		expect(november.at(-1)!.split(',').at(-1)).toBe('25.00');

		// The printable page shows the same total and says why each line was billed.
		const page = await (await pi.get(`/groups/${group.id}/statements/2025-10`)).text();
		expect(page).toContain('84.38');
		expect(page).toContain('inside the 24 h window');
	});

	it('refuses a month not over, a malformed month and another group’s PI; an empty month is a valid file', async () => {
		const group = await makeGroup('refusals');
		const other = await makeGroup('other');
		const pi = await signedIn(group.pi);
		const thisMonth = DateTime.now().setZone('Europe/Berlin').toFormat('yyyy-MM');
		const open = await pi.get(`/api/groups/${group.id}/statements/${thisMonth}.csv`);
		expect(open.status).toBe(422);
		expect((await errorOf(open)).code).toBe('month_not_over');
		const bad = await pi.get(`/api/groups/${group.id}/statements/2025-13.csv`);
		expect(bad.status).toBe(400);
		const theirs = await pi.get(`/api/groups/${other.id}/statements/2025-09.csv`);
		expect(theirs.status).toBe(403);
		expect((await pi.get(`/groups/${other.id}`)).status).toBe(403);
		const member = await signedIn(await makeUser('member', { group: group.id }));
		expect((await member.get(`/api/groups/${group.id}/statements/2025-09.csv`)).status).toBe(403);

		const empty = await pi.get(`/api/groups/${group.id}/statements/2025-09.csv`);
		expect(empty.status).toBe(200);
		expect((await empty.text()).split('\r\n')).toEqual([
			'booking_id,box,booked_by,start,end,status,reason,booked_hours,used_hours,billed_hours,rate,amount',
			expect.stringMatching(/^total,.*,0\.00,0\.00,0\.00,,0\.00$/),
			''
		]);
	});

	it('a closed month keeps its figures when a booking is changed afterwards', async () => {
		const group = await makeGroup('closing');
		const member = await makeUser('member', { group: group.id });
		const boxId = await makeBox({ rateInternal: 10 });
		const id = await book(boxId, member.id, group.id, {
			startAt: z('2024-03-12T09:00:00Z'),
			endAt: z('2024-03-12T12:00:00Z'),
			status: 'completed'
		});
		const manager = await signedIn(await makeUser('manager'));
		const pi = await signedIn(group.pi);
		expect((await pi.form('/manage/statements?/close', { month: '2024-03' })).status).toBe(403);
		const closed = await manager.form('/manage/statements?/close', { month: '2024-03' });
		expect(closed.status).toBe(200);
		await testDb()
			.update(bookings)
			.set({ status: 'cancelled', cancelCause: 'manager' })
			.where(eq(bookings.id, id));
		const csv = await (await pi.get(`/api/groups/${group.id}/statements/2024-03.csv`)).text();
		expect(csv.trimEnd().split('\r\n').at(-1)!.endsWith(',30.00')).toBe(true);
		expect((await manager.form('/manage/statements?/close', { month: '2024-03' })).status).toBe(
			409
		);
		const future = await manager.form('/manage/statements?/close', { month: '2099-01' });
		expect(future.status).toBe(422);
	});

	it('an external group is billed at the box’s external rate', async () => {
		const group = await makeGroup('external');
		await testDb()
			.update(researchGroups)
			.set({ external: true })
			.where(eq(researchGroups.id, group.id));
		const member = await makeUser('member', { group: group.id });
		const boxId = await makeBox({ rateInternal: 10, rateExternal: 30 });
		// 2 h on 9 Sep 2025 × 30.00 = 60.00 (the internal rate would give 20.00).
		await book(boxId, member.id, group.id, {
			startAt: z('2025-09-09T08:00:00Z'),
			endAt: z('2025-09-09T10:00:00Z'),
			status: 'completed'
		});
		const csv = await (
			await (await signedIn(group.pi)).get(`/api/groups/${group.id}/statements/2025-09.csv`)
		).text();
		const lines = csv.trimEnd().split('\r\n');
		expect(lines[1].split(',').slice(-2)).toEqual(['30.00', '60.00']);
		expect(lines.at(-1)!.endsWith(',60.00')).toBe(true);
	});

	it('a rate below zero is refused with a field message', async () => {
		const manager = await signedIn(await makeUser('manager'));
		const boxId = await makeBox();
		const page = await manager.form(`/manage/boxes/${boxId}`, {
			name: `Rate test ${boxId}`,
			room: 'T1',
			gas: 'Ar',
			volumeL: 1000,
			o2WarnPpm: 1,
			o2AlarmPpm: 10,
			h2oWarnPpm: 1,
			h2oAlarmPpm: 10,
			rateInternal: -5,
			rateExternal: 10,
			slotStepMin: 15,
			minLengthMin: 30,
			maxLengthMin: 240,
			horizonDays: 28,
			weeklyQuotaHours: 12,
			purgeMin: 30
		});
		expect(page.status).toBe(400);
		expect(await page.text()).toContain('A rate cannot be below zero.');
	});
});

describe('the group a booking is billed to', () => {
	it('is the group joined first unless the booker picks another of their own', async () => {
		const first = await makeGroup('first');
		const second = await makeGroup('second');
		const stranger = await makeGroup('stranger');
		const person = await makeUser('member', { group: first.id });
		await testDb()
			.insert(groupMemberships)
			.values({ groupId: second.id, userId: person.id, status: 'active' });
		const member = await signedIn(person);
		const boxId = await makeBox();
		const at = (hour: number) => {
			const start = DateTime.now()
				.setZone('Europe/Berlin')
				.startOf('day')
				.plus({ days: 3, hours: hour });
			return { start: start.toISO(), end: start.plus({ hours: 1 }).toISO() };
		};
		const plain = await member.post('/api/bookings', { boxId, ...at(8), purpose: 'Default group' });
		const picked = await member.post('/api/bookings', {
			boxId,
			...at(10),
			purpose: 'Picked',
			groupId: second.id
		});
		const [a, b] = await Promise.all([plain.json(), picked.json()]);
		const groupOf = async (id: number) =>
			(await testDb().select().from(bookings).where(eq(bookings.id, id)))[0].groupId;
		expect(await groupOf(a.booking.id)).toBe(first.id);
		expect(await groupOf(b.booking.id)).toBe(second.id);
		const refused = await member.post('/api/bookings', {
			boxId,
			...at(12),
			purpose: 'Not mine',
			groupId: stranger.id
		});
		expect(refused.status).toBe(400);
		expect((await errorOf(refused)).details).toEqual({
			fields: { groupId: 'Choose one of your groups.' }
		});
	});
});

describe('no-shows', () => {
	it('marks a booking nobody checked in to, frees the rest of the slot and tells the member', async () => {
		const group = await makeGroup('noshow');
		const member = await makeUser('member', { group: group.id });
		const boxId = await makeBox({ noShowGraceMin: 15 });
		const start = new Date(Math.floor(Date.now() / 60_000) * 60_000 - 20 * 60_000);
		const id = await book(boxId, member.id, group.id, {
			startAt: start,
			endAt: new Date(start.getTime() + 3 * 3_600_000)
		});
		await until(async () => {
			const [b] = await testDb().select().from(bookings).where(eq(bookings.id, id));
			return b.status === 'no_show';
		});
		const [b] = await testDb().select().from(bookings).where(eq(bookings.id, id));
		expect(b.blockedUntil.getTime()).toBeLessThanOrEqual(Date.now());
		await until(async () => {
			const told = await testDb()
				.select()
				.from(notifications)
				.where(eq(notifications.userId, member.id));
			return told.some((n) => n.title.startsWith('No-show'));
		});
		// The rest of the slot can be booked by someone else (same box, no certification needed).
		const other = await signedIn(await makeUser('member'));
		const next = DateTime.now().setZone('Europe/Berlin').startOf('hour').plus({ hours: 1 });
		const taken = await other.post('/api/bookings', {
			boxId,
			start: next.toISO(),
			end: next.plus({ minutes: 30 }).toISO(),
			purpose: 'Using the freed time'
		});
		expect(taken.status).toBe(201);
	});
});
