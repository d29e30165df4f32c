// Every destructive form asks first and says what will happen: the first post, without
// confirmed=yes, changes nothing and answers the consequence; the same fields posted again
// with confirmed=yes do it. All of it is plain form posts, as a browser without JavaScript
// sends them.
import { afterAll, describe, expect, it } from 'vitest';
import { and, eq } from 'drizzle-orm';
import { DateTime } from 'luxon';
import {
	auditLog,
	bookings,
	groupMemberships,
	maintenanceTasks,
	outages,
	users
} from '../../src/lib/server/db/schema';
import {
	closeTestDb,
	fitGloves,
	makeBox,
	makeGroup,
	makeUser,
	testDb,
	uniqueEmail
} from '../support/db';
import { signedIn } from '../support/http';
import { facilityTz } from '../support/time';

afterAll(closeTestDb);

const H = 3_600_000;
const fromNow = (ms: number) => new Date(Date.now() + ms);
const local = (at: Date) => DateTime.fromJSDate(at, { zone: facilityTz });
const hhmm = (at: Date) => local(at).toFormat('HH:mm');

/** A booking of `userId` (a fresh member by default) on the box over [start, start + hours). */
async function bookingOn(
	boxId: number,
	start: Date,
	options: { hours?: number; userId?: number; values?: Partial<typeof bookings.$inferInsert> } = {}
) {
	const userId = options.userId ?? (await makeUser('member')).id;
	const endAt = new Date(start.getTime() + (options.hours ?? 1) * H);
	const [row] = await testDb()
		.insert(bookings)
		.values({
			boxId,
			userId,
			startAt: start,
			endAt,
			blockedUntil: endAt,
			purpose: 'synthesis',
			status: 'confirmed',
			confirmedAt: new Date(),
			...options.values
		})
		.$returningId();
	return row.id;
}

const bookingRow = async (id: number) =>
	(await testDb().select().from(bookings).where(eq(bookings.id, id)))[0];

describe('cancelling a booking on My bookings', () => {
	it('says a cancellation inside the window will be billed, and cancels only when confirmed', async () => {
		const boxId = await makeBox({ cancelWindowHours: 24 });
		const member = await makeUser('member');
		const id = await bookingOn(boxId, fromNow(3 * H), { userId: member.id });
		const client = await signedIn(member);

		const asked = await client.form('/bookings?/cancel', { bookingId: id });
		expect(asked.status).toBe(200);
		const page = await asked.text();
		expect(page).toContain(
			'This cancellation will be billed as booked (inside 24 h of the start).'
		);
		expect(page).toContain('Yes, cancel it');
		expect(page).toContain('name="confirmed" value="yes"');
		expect((await bookingRow(id)).status).toBe('confirmed');

		const done = await client.form('/bookings?/cancel', { bookingId: id, confirmed: 'yes' });
		expect(done.status).toBe(200);
		expect(await bookingRow(id)).toMatchObject({ status: 'cancelled', cancelCause: 'user' });
	});

	it('says one well ahead of the window will not be billed', async () => {
		const boxId = await makeBox({ cancelWindowHours: 24 });
		const member = await makeUser('member');
		const id = await bookingOn(boxId, fromNow(5 * 24 * H), { userId: member.id });
		const page = await (
			await (await signedIn(member)).form('/bookings?/cancel', { bookingId: id })
		).text();
		expect(page).toContain(
			'This cancellation will not be billed (more than 24 h before the start).'
		);
		expect((await bookingRow(id)).status).toBe('confirmed');
	});

	it('a checked-out booking reads "Checked out HH:MM", offers no cancel, and is not cancelled from the page', async () => {
		const boxId = await makeBox();
		const member = await makeUser('member');
		const checkInAt = fromNow(-50 * 60_000);
		const checkOutAt = fromNow(-5 * 60_000);
		const id = await bookingOn(boxId, fromNow(-H), {
			userId: member.id,
			hours: 2,
			values: { checkInAt, checkOutAt }
		});
		const client = await signedIn(member);

		const page = await (await client.get('/bookings')).text();
		expect(page).toContain(`Checked out ${hhmm(checkOutAt)}`);
		expect(page).not.toMatch(/aria-label="Cancel booking on/);
		expect(page).not.toContain('billed if cancelled');

		const posts: Record<string, string | number>[] = [
			{ bookingId: id },
			{ bookingId: id, confirmed: 'yes' }
		];
		for (const fields of posts) {
			const refused = await client.form('/bookings?/cancel', fields);
			expect(refused.status).toBe(409);
			expect(await refused.text()).toContain('it can no longer be cancelled');
		}
		expect((await bookingRow(id)).status).toBe('confirmed');
	});
});

/** The box page's outage form fields for [start, end) on the facility clock. */
function outageFields(start: Date, end: Date) {
	return {
		startDate: local(start).toISODate()!,
		startTime: local(start).toFormat('HH:mm'),
		endDate: local(end).toISODate()!,
		endTime: local(end).toFormat('HH:mm'),
		kind: 'other',
		reason: 'Purifier check'
	};
}

describe('outages on the box page', () => {
	it('taking the box out of service names every booking it cancels first', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const day = DateTime.now().setZone(facilityTz).startOf('day').plus({ days: 6 });
		const at = (hour: number) => day.set({ hour }).toJSDate();
		const ids = [
			await bookingOn(boxId, at(8)),
			await bookingOn(boxId, at(10)),
			await bookingOn(boxId, at(12))
		];
		const fields = outageFields(at(7), at(14));

		const asked = await manager.form(`/boxes/${boxId}?/outage`, fields);
		expect(asked.status).toBe(200);
		const page = await asked.text();
		expect(page).toContain('This cancels 3 bookings');
		expect(page).toContain(`Test member, ${local(at(8)).toFormat('ccc d LLL, HH:mm')}–09:00`);
		expect(page).toContain('Yes, take it out of service');
		expect(await testDb().select().from(outages).where(eq(outages.boxId, boxId))).toEqual([]);
		for (const id of ids) expect((await bookingRow(id)).status).toBe('confirmed');

		const done = await manager.form(`/boxes/${boxId}?/outage`, { ...fields, confirmed: 'yes' });
		expect(done.status).toBe(200);
		expect(await done.text()).toMatch(/3\s+bookings were cancelled/);
		for (const id of ids)
			expect(await bookingRow(id)).toMatchObject({ status: 'cancelled', cancelCause: 'outage' });
	});

	it('an outage that cancels nothing is made at once', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const start = DateTime.now().setZone(facilityTz).startOf('day').plus({ days: 6, hours: 7 });
		const made = await manager.form(
			`/boxes/${boxId}?/outage`,
			outageFields(start.toJSDate(), start.plus({ hours: 2 }).toJSDate())
		);
		expect(made.status).toBe(200);
		expect(await testDb().select().from(outages).where(eq(outages.boxId, boxId))).toHaveLength(1);
	});

	it('moving the end later names the bookings the longer outage cancels', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const day = DateTime.now().setZone(facilityTz).startOf('day').plus({ days: 6 });
		const made = await manager.post(`/api/boxes/${boxId}/outages`, {
			start: day.set({ hour: 7 }).toISO(),
			end: day.set({ hour: 9 }).toISO(),
			kind: 'other',
			reason: 'Sensor swap'
		});
		const outageId = (await made.json()).outage.id as number;
		const later = await bookingOn(boxId, day.set({ hour: 10 }).toJSDate());
		const fields = { outageId, endDate: day.toISODate()!, endTime: '12:00' };

		const page = await (await manager.form(`/boxes/${boxId}?/extendOutage`, fields)).text();
		expect(page).toContain('This cancels 1 booking');
		expect((await bookingRow(later)).status).toBe('confirmed');

		await manager.form(`/boxes/${boxId}?/extendOutage`, { ...fields, confirmed: 'yes' });
		expect((await bookingRow(later)).status).toBe('cancelled');
	});

	it('"End now" on an outage that has not begun withdraws it; the booking it cancelled stays cancelled', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const start = fromNow(48 * H);
		const hit = await bookingOn(boxId, new Date(start.getTime() + H));
		const made = await manager.post(`/api/boxes/${boxId}/outages`, {
			start: start.toISOString(),
			end: new Date(start.getTime() + 3 * H).toISOString(),
			kind: 'regeneration',
			reason: 'Regeneration'
		});
		const outageId = (await made.json()).outage.id as number;
		expect((await bookingRow(hit)).outageId).toBe(outageId);

		const box = await (await manager.get(`/boxes/${boxId}`)).text();
		expect(box).toMatch(/Withdraw(<!---->)?<\/button>/);
		expect(box).not.toMatch(/End now(<!---->)?<\/button>/);

		const asked = await manager.form(`/boxes/${boxId}?/endOutage`, { outageId });
		expect(asked.status).toBe(200);
		const page = await asked.text();
		expect(page).toContain('Withdraw this planned outage?');
		expect(page).toContain('The booking it cancelled stays cancelled');
		expect(await testDb().select().from(outages).where(eq(outages.id, outageId))).toHaveLength(1);

		const done = await manager.form(`/boxes/${boxId}?/endOutage`, { outageId, confirmed: 'yes' });
		expect(done.status).toBe(200);
		expect(await done.text()).toContain('The planned outage is withdrawn');
		expect(await testDb().select().from(outages).where(eq(outages.id, outageId))).toEqual([]);
		expect(await bookingRow(hit)).toMatchObject({ status: 'cancelled', outageId: null });
		const [entry] = await testDb()
			.select()
			.from(auditLog)
			.where(and(eq(auditLog.action, 'outage.withdrawn'), eq(auditLog.entityId, String(outageId))));
		expect(entry.details).toMatchObject({ boxId, cancelledBookingIds: [hit] });
	});

	it('"End now" on one under way asks, then ends it now; refused at once while a glove change is open', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const made = await manager.post(`/api/boxes/${boxId}/outages`, {
			start: fromNow(-H).toISOString(),
			end: fromNow(2 * H).toISOString(),
			kind: 'sensor',
			reason: 'Sensor swap'
		});
		const outageId = (await made.json()).outage.id as number;
		const page = await (await manager.form(`/boxes/${boxId}?/endOutage`, { outageId })).text();
		expect(page).toContain('This ends the outage now and puts the box back in service.');
		expect(page).toContain('Yes, end it now');
		const [still] = await testDb().select().from(outages).where(eq(outages.id, outageId));
		expect(still.endAt.getTime()).toBeGreaterThan(Date.now());

		await manager.form(`/boxes/${boxId}?/endOutage`, { outageId, confirmed: 'yes' });
		const [ended] = await testDb().select().from(outages).where(eq(outages.id, outageId));
		expect(ended.endAt.getTime()).toBeLessThanOrEqual(Date.now() + 1000);
		expect(ended.endAt.getTime()).toBeGreaterThan(ended.startAt.getTime());

		const other = await makeBox();
		const [left] = await fitGloves(other);
		const change = await (
			await manager.post(`/api/boxes/${other}/glove-changes`, { portId: left.id })
		).json();
		const refused = await manager.form(`/boxes/${other}?/endOutage`, {
			outageId: change.outageId
		});
		expect(refused.status).toBe(409);
		expect(await refused.text()).toContain('A glove change on this outage is still open');
	});
});

describe('the other destructive forms', () => {
	it('retiring a maintenance task', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		await manager.form(`/boxes/${boxId}/maintenance?/add`, {
			kind: 'glove_inspection',
			title: 'Weekly glove check',
			intervalDays: 7,
			outageMinutes: 0
		});
		const [task] = await testDb()
			.select()
			.from(maintenanceTasks)
			.where(eq(maintenanceTasks.boxId, boxId));
		const page = await (
			await manager.form(`/boxes/${boxId}/maintenance?/retire`, { taskId: task.id })
		).text();
		expect(page).toContain('Retire “Weekly glove check”?');
		expect(page).toContain('nobody is reminded');
		const active = async () =>
			(await testDb().select().from(maintenanceTasks).where(eq(maintenanceTasks.id, task.id)))[0]
				.active;
		expect(await active()).toBe(true);
		await manager.form(`/boxes/${boxId}/maintenance?/retire`, {
			taskId: task.id,
			confirmed: 'yes'
		});
		expect(await active()).toBe(false);
	});

	it('removing a group member and declining a request to join', async () => {
		const group = await makeGroup('confirm');
		const member = await makeUser('member', { group: group.id });
		const asker = await makeUser('member');
		await testDb()
			.insert(groupMemberships)
			.values({ groupId: group.id, userId: asker.id, status: 'pending' });
		const pi = await signedIn(group.pi);
		const statusOf = async (userId: number) =>
			(
				await testDb()
					.select({ s: groupMemberships.status })
					.from(groupMemberships)
					.where(and(eq(groupMemberships.groupId, group.id), eq(groupMemberships.userId, userId)))
			)[0].s;

		const remove = await (
			await pi.form(`/groups/${group.id}?/remove`, { userId: member.id })
		).text();
		expect(remove).toContain(`Remove Test member from ${group.name}?`);
		expect(remove).toContain('Their bookings still ahead are billed to their other group');
		expect(await statusOf(member.id)).toBe('active');
		await pi.form(`/groups/${group.id}?/remove`, { userId: member.id, confirmed: 'yes' });
		expect(await statusOf(member.id)).toBe('removed');

		const decline = await (
			await pi.form(`/groups/${group.id}?/decline`, { userId: asker.id })
		).text();
		expect(decline).toContain('request to join');
		expect(await statusOf(asker.id)).toBe('pending');
		await pi.form(`/groups/${group.id}?/decline`, { userId: asker.id, confirmed: 'yes' });
		expect(await statusOf(asker.id)).toBe('removed');
	});

	it('declining a registration and a booking waiting for approval', async () => {
		const group = await makeGroup('registrations');
		const email = uniqueEmail('applicant');
		const [person] = await testDb()
			.insert(users)
			.values({
				email,
				name: 'Test applicant',
				role: 'member',
				status: 'pending',
				passwordHash: 'x'
			})
			.$returningId();
		await testDb()
			.insert(groupMemberships)
			.values({ groupId: group.id, userId: person.id, status: 'pending' });
		const pi = await signedIn(group.pi);
		const page = await (await pi.form('/manage/approvals?/decline', { userId: person.id })).text();
		expect(page).toContain('Decline Test applicant’s registration?');
		expect(page).toContain(`The account (${email}, asking to join ${group.name}) is deleted`);
		const exists = async () =>
			(await testDb().select().from(users).where(eq(users.id, person.id))).length;
		expect(await exists()).toBe(1);
		await pi.form('/manage/approvals?/decline', { userId: person.id, confirmed: 'yes' });
		expect(await exists()).toBe(0);

		const boxId = await makeBox({ needsApproval: true });
		const pending = await bookingOn(boxId, fromNow(72 * H), {
			values: { status: 'pending', confirmedAt: null }
		});
		const manager = await signedIn(await makeUser('manager'));
		const fields = { bookingId: pending, reason: 'Box reserved for a course' };
		const asked = await (await manager.form('/manage/approvals?/declineBooking', fields)).text();
		expect(asked).toContain('Decline Test member’s booking on');
		expect(asked).toContain('they see your reason on their bookings');
		expect((await bookingRow(pending)).status).toBe('pending');
		await manager.form('/manage/approvals?/declineBooking', { ...fields, confirmed: 'yes' });
		expect(await bookingRow(pending)).toMatchObject({
			status: 'cancelled',
			cancelReason: 'Box reserved for a course'
		});
	});
});
