import { afterAll, describe, expect, it } from 'vitest';
import { eq, like } from 'drizzle-orm';
import { DateTime } from 'luxon';
import { bookings, maintenanceLog, maintenanceTasks, outbox } from '../../src/lib/server/db/schema';
import { closeTestDb, makeBox, makeUser, testDb } from '../support/db';
import { signedIn } from '../support/http';
import { facilityTz, slot } from '../support/time';
import { until } from '../support/until';

afterAll(closeTestDb);

const daysAgo = (n: number) => DateTime.now().setZone(facilityTz).minus({ days: n }).toISODate()!;
const tasksOf = (boxId: number) =>
	testDb().select().from(maintenanceTasks).where(eq(maintenanceTasks.boxId, boxId));

describe('maintenance schedule', () => {
	it('an overdue task shows on the dashboard, mails the managers once, and moves on when done', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const added = await manager.form(`/boxes/${boxId}/maintenance?/add`, {
			kind: 'purifier_regeneration',
			title: 'Regenerate the purifier',
			intervalDays: 60,
			outageMinutes: 240,
			lastDone: daysAgo(70)
		});
		expect(added.status).toBe(200);
		const [task] = await tasksOf(boxId);
		expect(task.nextDueAt.getTime()).toBeLessThan(Date.now() - 9 * 86_400_000);

		const page = await (await manager.get(`/boxes/${boxId}/maintenance`)).text();
		expect(page).toContain('Overdue');
		const dashboard = await (await manager.get('/')).text();
		expect(dashboard).toContain('Regenerate the purifier');
		// This box's task, not the demo's task of the same name.
		expect(dashboard).toContain(`/boxes/${boxId}/maintenance`);

		// The scheduler in the app tells every manager, once for this due date.
		const key = `maintenance-due:${task.id}:${task.nextDueAt.toISOString()}:%`;
		await until(
			async () =>
				(await testDb().select().from(outbox).where(like(outbox.dedupeKey, key))).length > 0
		);
		await until(async () => (await tasksOf(boxId))[0].notifiedDueAt !== null);
		const [told] = await testDb().select().from(outbox).where(like(outbox.dedupeKey, key));
		expect(told.subject).toContain('Regenerate the purifier is due');

		const done = await manager.form(`/boxes/${boxId}/maintenance?/done`, {
			taskId: task.id,
			note: 'Regenerated with forming gas, 6 h'
		});
		expect(done.status).toBe(200);
		const [after] = await tasksOf(boxId);
		expect(after.lastDoneAt).not.toBeNull();
		const expected = DateTime.fromJSDate(after.lastDoneAt!).setZone(facilityTz).plus({ days: 60 });
		expect(after.nextDueAt.getTime()).toBe(expected.toMillis());
		const log = await testDb()
			.select()
			.from(maintenanceLog)
			.where(eq(maintenanceLog.taskId, task.id));
		expect(log).toMatchObject([{ note: 'Regenerated with forming gas, 6 h' }]);
		expect(await (await manager.get(`/boxes/${boxId}/maintenance`)).text()).toContain(
			'Regenerated with forming gas, 6 h'
		);
	});

	it('a task books its own planned outage, which cancels the bookings it covers', async () => {
		const boxId = await makeBox();
		const member = await makeUser('member');
		const manager = await signedIn(await makeUser('manager'));
		const when = slot(3, 10, 60);
		const [booking] = await testDb()
			.insert(bookings)
			.values({
				boxId,
				userId: member.id,
				startAt: new Date(when.start),
				endAt: new Date(when.end),
				blockedUntil: new Date(when.end),
				purpose: 'Covered by upkeep',
				status: 'confirmed'
			})
			.$returningId();
		await manager.form(`/boxes/${boxId}/maintenance?/add`, {
			kind: 'pump_oil',
			title: 'Change the vacuum pump oil',
			intervalDays: 180,
			outageMinutes: 120,
			lastDone: daysAgo(175)
		});
		const [task] = await tasksOf(boxId);
		const start = DateTime.fromISO(when.start, { zone: facilityTz }).minus({ minutes: 30 });
		const plan = {
			taskId: task.id,
			startDate: start.toISODate()!,
			startTime: start.toFormat('HH:mm'),
			minutes: 120
		};
		const planned = await manager.form(`/boxes/${boxId}/maintenance?/plan`, plan);
		expect(planned.status).toBe(200);
		const plannedText = await planned.text();
		expect(plannedText.replace(/<!--.*?-->/g, '').replace(/\s+/g, ' ')).toContain(
			'1 booking was cancelled'
		);
		const [cancelled] = await testDb().select().from(bookings).where(eq(bookings.id, booking.id));
		expect(cancelled).toMatchObject({ status: 'cancelled', cancelCause: 'outage' });
		expect(cancelled.cancelReason).toBe('Planned maintenance: Change the vacuum pump oil');
		expect((await tasksOf(boxId))[0].plannedOutageId).not.toBeNull();
		const again = await manager.form(`/boxes/${boxId}/maintenance?/plan`, plan);
		expect(again.status).toBe(409);
	});

	it('refuses bad intervals, past outages and members, with field messages', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const bad = await manager.form(`/boxes/${boxId}/maintenance?/add`, {
			kind: 'glove_inspection',
			title: 'Gloves',
			intervalDays: 0,
			outageMinutes: -5
		});
		expect(bad.status).toBe(400);
		const text = await bad.text();
		expect(text).toContain('At least every day.');
		expect(text).toContain('It cannot be negative.');
		expect(await tasksOf(boxId)).toHaveLength(0);

		await manager.form(`/boxes/${boxId}/maintenance?/add`, {
			kind: 'glove_inspection',
			title: 'Weekly glove check',
			intervalDays: 7,
			outageMinutes: 0
		});
		const [task] = await tasksOf(boxId);
		const past = await manager.form(`/boxes/${boxId}/maintenance?/plan`, {
			taskId: task.id,
			startDate: daysAgo(2),
			startTime: '10:00',
			minutes: 60
		});
		expect(past.status).toBe(400);
		expect(await past.text()).toContain('cannot start in the past');

		const member = await signedIn(await makeUser('member'));
		expect((await member.get(`/boxes/${boxId}/maintenance`)).status).toBe(200);
		const refused = await member.form(`/boxes/${boxId}/maintenance?/done`, { taskId: task.id });
		expect(refused.status).toBe(403);
	});
});
