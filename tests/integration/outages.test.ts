import { afterAll, describe, expect, it } from 'vitest';
import { rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { and, eq, inArray, sql } from 'drizzle-orm';
import ICAL from 'ical.js';
import {
	bookings,
	groupMemberships,
	notifications,
	outages,
	outbox
} from '../../src/lib/server/db/schema';
import {
	certifiedMemberAndBox,
	closeTestDb,
	makeBox,
	makeGroup,
	makeUser,
	testDb
} from '../support/db';
import { errorOf, signedIn } from '../support/http';
import { sunkMail } from '../support/mail';
import { slot } from '../support/time';
import { until } from '../support/until';
import { renderRow } from '../../src/lib/server/mail/render';

afterAll(closeTestDb);

/** `count` confirmed bookings on a fresh box, one hour each, each by a different person. */
async function boxWithBookings(count: number, daysAhead: number) {
	const boxId = await makeBox();
	const people = await Promise.all(Array.from({ length: count }, () => makeUser('member')));
	const day = slot(daysAhead, 0, 24 * 60);
	const dayStart = new Date(day.start).getTime();
	const ids: number[] = [];
	for (let i = 0; i < count; i++) {
		const startAt = new Date(dayStart + i * 3_600_000);
		const endAt = new Date(startAt.getTime() + 3_600_000);
		const [row] = await testDb()
			.insert(bookings)
			.values({
				boxId,
				userId: people[i].id,
				startAt,
				endAt,
				blockedUntil: endAt,
				purpose: `work ${i}`,
				status: 'confirmed'
			})
			.$returningId();
		ids.push(row.id);
	}
	return {
		boxId,
		people,
		ids,
		window: { start: day.start, end: new Date(dayStart + count * 3_600_000).toISOString() }
	};
}

const sinkDir = () => {
	const dir = process.env.MAIL_SINK_DIR;
	if (!dir) throw new Error('MAIL_SINK_DIR is not set; run `npm test`.');
	return dir;
};

const sinkMessagesFor = (outboxId: number) =>
	sunkMail(sinkDir()).filter((m) => m.messageId.startsWith(`<outbox-${outboxId}.`));

describe('POST /api/boxes/:id/outages', () => {
	it('an outage over 20 bookings cancels all 20 with reason and cause and queues 20 messages', async () => {
		const { boxId, ids, window } = await boxWithBookings(20, 9);
		const manager = await signedIn(await makeUser('manager'));
		const r = await manager.post(`/api/boxes/${boxId}/outages`, {
			...window,
			kind: 'glove_change',
			reason: 'Glove change on the front-left port'
		});
		expect(r.status).toBe(201);
		const body = await r.json();
		expect(body.outage).toMatchObject({ boxId, kind: 'glove_change' });
		expect([...body.cancelledBookingIds].sort((a: number, b: number) => a - b)).toEqual(ids);

		const rows = await testDb().select().from(bookings).where(inArray(bookings.id, ids));
		expect(rows.every((b) => b.status === 'cancelled' && b.cancelCause === 'outage')).toBe(true);
		expect(
			rows.every(
				(b) => b.cancelReason === 'Glove change on the front-left port' && b.sequence === 1
			)
		).toBe(true);
		const queued = await testDb()
			.select()
			.from(outbox)
			.where(
				inArray(
					outbox.dedupeKey,
					ids.map((id) => `booking:${id}:cancelled:1`)
				)
			);
		expect(queued).toHaveLength(20);
		const notices = await testDb()
			.select({ n: sql<number>`count(*)` })
			.from(notifications)
			.where(
				inArray(
					notifications.userId,
					rows.map((b) => b.userId)
				)
			);
		expect(Number(notices[0].n)).toBe(20);
	});

	it('a failure midway changes nothing: no outage, no cancellation, no message', async () => {
		const { boxId, ids, people, window } = await boxWithBookings(20, 10);
		const victim = people[9].id;
		const db = testDb();
		// A trigger makes the tenth notification fail, inside the outage's transaction.
		await db.execute(sql.raw(`DROP TRIGGER IF EXISTS test_fail_notice`));
		await db.execute(
			sql.raw(
				`CREATE TRIGGER test_fail_notice BEFORE INSERT ON notifications FOR EACH ROW ` +
					`BEGIN IF NEW.user_id = ${victim} THEN SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'forced failure'; END IF; END`
			)
		);
		try {
			const manager = await signedIn(await makeUser('manager'));
			const r = await manager.post(`/api/boxes/${boxId}/outages`, {
				...window,
				kind: 'leak',
				reason: 'Leak at the antechamber door'
			});
			expect(r.status).toBe(500);
			expect((await errorOf(r)).code).toBe('internal');
		} finally {
			await db.execute(sql.raw(`DROP TRIGGER IF EXISTS test_fail_notice`));
		}
		const rows = await db.select().from(bookings).where(inArray(bookings.id, ids));
		expect(rows.every((b) => b.status === 'confirmed' && b.sequence === 0)).toBe(true);
		expect(await db.select().from(outages).where(eq(outages.boxId, boxId))).toEqual([]);
		const queued = await db
			.select()
			.from(outbox)
			.where(
				inArray(
					outbox.dedupeKey,
					ids.map((id) => `booking:${id}:cancelled:1`)
				)
			);
		expect(queued).toEqual([]);
	});

	it('refuses bad input and non-managers', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const { start, end } = slot(11, 9, 120);
		const backwards = await manager.post(`/api/boxes/${boxId}/outages`, {
			start: end,
			end: start,
			kind: 'leak',
			reason: 'Leak'
		});
		expect(backwards.status).toBe(400);
		expect((await errorOf(backwards)).details?.fields).toHaveProperty('end');
		const badKind = await manager.post(`/api/boxes/${boxId}/outages`, {
			start,
			end,
			kind: 'party',
			reason: 'Leak'
		});
		expect((await errorOf(badKind)).details?.fields).toHaveProperty('kind');
		expect(
			(
				await manager.post(`/api/boxes/99999999/outages`, {
					start,
					end,
					kind: 'leak',
					reason: 'Leak'
				})
			).status
		).toBe(404);
		const member = await signedIn(await makeUser('member'));
		const refused = await member.post(`/api/boxes/${boxId}/outages`, {
			start,
			end,
			kind: 'leak',
			reason: 'Leak'
		});
		expect(refused.status).toBe(403);
		expect(await testDb().select().from(outages).where(eq(outages.boxId, boxId))).toEqual([]);
	});
});

describe('an outage and a purge buffer: one overlap rule', () => {
	// A booking holds the box from its start until its purge ends (blocked_until). The rule
	// that refuses a booking an outage would overlap (holdOverlaps in domain/booking-rules)
	// also picks the bookings an outage cancels.
	async function volatileBooking(daysAhead: number) {
		const { user, boxId } = await certifiedMemberAndBox({ purgeMin: 30 });
		const times = slot(daysAhead, 9, 60);
		const made = await (
			await signedIn(user)
		).post('/api/bookings', {
			boxId,
			...times,
			purpose: 'Solvent work',
			volatileSolvents: true
		});
		expect(made.status).toBe(201);
		const { booking } = await made.json();
		// What is stored is the purge end the rules checked: the end plus the box's 30 min.
		const [row] = await testDb().select().from(bookings).where(eq(bookings.id, booking.id));
		expect(row.blockedUntil.getTime()).toBe(new Date(times.end).getTime() + 30 * 60_000);
		return { boxId, bookingId: booking.id as number };
	}

	async function outageFrom(boxId: number, start: string, end: string) {
		const manager = await signedIn(await makeUser('manager'));
		const preview = await manager.post(`/api/boxes/${boxId}/outages/preview`, { start, end });
		expect(preview.status).toBe(200);
		const r = await manager.post(`/api/boxes/${boxId}/outages`, {
			start,
			end,
			kind: 'regeneration',
			reason: 'Purifier regeneration'
		});
		expect(r.status).toBe(201);
		return {
			previewed: ((await preview.json()).bookings as { id: number }[]).map((b) => b.id),
			cancelled: (await r.json()).cancelledBookingIds as number[]
		};
	}

	it('an outage starting during a booking’s purge buffer cancels that booking', async () => {
		const { boxId, bookingId } = await volatileBooking(15);
		// The booking ends at 10:00; its purge runs to 10:30. The outage starts at 10:15.
		const { previewed, cancelled } = await outageFrom(
			boxId,
			slot(15, 10, 0, 15).start,
			slot(15, 12, 0).start
		);
		expect(previewed).toEqual([bookingId]);
		expect(cancelled).toEqual([bookingId]);
		const [row] = await testDb().select().from(bookings).where(eq(bookings.id, bookingId));
		expect(row).toMatchObject({ status: 'cancelled', cancelCause: 'outage', sequence: 1 });
	});

	it('an outage starting after the buffer does not cancel the booking', async () => {
		const { boxId, bookingId } = await volatileBooking(16);
		// The purge ends at 10:30 and the hold is half-open, so an outage from 10:30 is clear.
		const { previewed, cancelled } = await outageFrom(
			boxId,
			slot(16, 10, 0, 30).start,
			slot(16, 12, 0).start
		);
		expect(previewed).toEqual([]);
		expect(cancelled).toEqual([]);
		const [row] = await testDb().select().from(bookings).where(eq(bookings.id, bookingId));
		expect(row).toMatchObject({ status: 'confirmed', sequence: 0 });
	});
});

describe('the outbox and the mail sink', () => {
	it('the cancellation carries a METHOD:CANCEL invitation with the booking UID and a raised SEQUENCE', async () => {
		const { boxId, ids, window } = await boxWithBookings(1, 12);
		const manager = await signedIn(await makeUser('manager'));
		expect(
			(
				await manager.post(`/api/boxes/${boxId}/outages`, {
					...window,
					kind: 'sensor',
					reason: 'O₂ sensor fault'
				})
			).status
		).toBe(201);
		const [row] = await testDb()
			.select()
			.from(outbox)
			.where(eq(outbox.dedupeKey, `booking:${ids[0]}:cancelled:1`));
		expect(row.icsMethod).toBe('CANCEL');
		const calendar = new ICAL.Component(ICAL.parse(renderRow(row).ics!));
		expect(calendar.getFirstPropertyValue('method')).toBe('CANCEL');
		const event = new ICAL.Event(calendar.getFirstSubcomponent('vevent')!);
		expect(event.uid).toBe(`booking-${ids[0]}@boxwright`);
		expect(event.sequence).toBe(1);
		expect(event.component.getFirstPropertyValue('status')).toBe('CANCELLED');

		await until(async () => sinkMessagesFor(row.id).length === 1);
		const mail = sinkMessagesFor(row.id)[0];
		expect(mail.raw).toMatch(/text\/calendar; charset=utf-8; method=CANCEL/i);
		expect(mail.subject).toMatch(/^Cancelled: Test box/);
		expect(mail.raw).toContain(`booking-${ids[0]}@boxwright`);
	});

	it('with the sink refusing, messages wait; once it is back all arrive, none twice, with two workers', async () => {
		const pauseFile = join(sinkDir(), 'paused');
		writeFileSync(pauseFile, 'paused by a test');
		const worker = await import('../../src/lib/server/mail/worker');
		try {
			const { boxId, ids, window } = await boxWithBookings(6, 13);
			const manager = await signedIn(await makeUser('manager'));
			expect(
				(
					await manager.post(`/api/boxes/${boxId}/outages`, {
						...window,
						kind: 'regeneration',
						reason: 'Purifier regeneration'
					})
				).status
			).toBe(201);
			const keys = ids.map((id) => `booking:${id}:cancelled:1`);
			const rows = () => testDb().select().from(outbox).where(inArray(outbox.dedupeKey, keys));
			// One message per cancelled booking, or the checks below would hold of nothing.
			expect(await rows()).toHaveLength(6);

			// The app's worker tries, the sink says 421: every row has failed at least once, has
			// the error noted, and waits for its next try (none sent, none given up).
			await until(async () =>
				(await rows()).every(
					(r) =>
						r.attempts >= 1 && r.lastError && (r.status === 'pending' || r.status === 'sending')
				)
			);
			expect((await rows()).flatMap((r) => sinkMessagesFor(r.id))).toEqual([]);

			// A second worker in this process, beside the app's own.
			worker.startWorker(100);
			rmSync(pauseFile);
			await until(async () => (await rows()).every((r) => r.status === 'sent'));
			for (const r of await rows()) expect(sinkMessagesFor(r.id)).toHaveLength(1);
			expect((await rows()).flatMap((r) => sinkMessagesFor(r.id))).toHaveLength(6);
		} finally {
			rmSync(pauseFile, { force: true });
			worker.stopWorker();
		}
	});
});

describe('changing and ending an outage', () => {
	it('a later end cancels what it now overlaps; ending early returns the box to service', async () => {
		const { boxId, ids, window } = await boxWithBookings(3, 14);
		const manager = await signedIn(await makeUser('manager'));
		const firstEnd = new Date(new Date(window.start).getTime() + 3_600_000).toISOString();
		const r = await manager.post(`/api/boxes/${boxId}/outages`, {
			start: window.start,
			end: firstEnd,
			kind: 'other',
			reason: 'Inspection'
		});
		expect((await r.json()).cancelledBookingIds).toEqual([ids[0]]);

		const { extendOutage, endOutage } = await import('../../src/lib/server/services/outages');
		const [outage] = await testDb().select().from(outages).where(eq(outages.boxId, boxId));
		const actor = { id: outage.createdBy!, role: 'manager' as const };
		const extended = await extendOutage(actor, outage.id, new Date(window.end));
		expect(extended.cancelledBookingIds.sort()).toEqual([ids[1], ids[2]].sort());
		// An outage that has not begun is withdrawn when ended: no zero-length row stays
		// behind, and the bookings it cancelled stay cancelled.
		await endOutage(actor, outage.id);
		expect(await testDb().select().from(outages).where(eq(outages.id, outage.id))).toEqual([]);
		const still = await testDb().select().from(bookings).where(inArray(bookings.id, ids));
		expect(still.every((b) => b.status === 'cancelled')).toBe(true);
	});
});

describe('rebooking after an outage', () => {
	it('the message and the bookings page offer free slots of the same length, each bookable at once', async () => {
		const boxId = await makeBox();
		const member = await makeUser('member');
		const client = await signedIn(member);
		const times = slot(1, 9, 90);
		const made = await client.post('/api/bookings', { boxId, ...times, purpose: 'Cell assembly' });
		expect(made.status).toBe(201);
		const { booking } = await made.json();

		const manager = await signedIn(await makeUser('manager'));
		const outageEnd = slot(1, 12, 0).start;
		const r = await manager.post(`/api/boxes/${boxId}/outages`, {
			start: slot(1, 8, 0).start,
			end: outageEnd,
			kind: 'leak',
			reason: 'Leak test after a glove change'
		});
		expect((await r.json()).cancelledBookingIds).toEqual([booking.id]);

		const [queued] = await testDb()
			.select()
			.from(outbox)
			.where(eq(outbox.dedupeKey, `booking:${booking.id}:cancelled:1`));
		expect(renderRow(queued).text).toContain(
			'Free slots of the same length you could take instead:'
		);

		const page = await (await client.get('/bookings')).text();
		expect(page).toContain('was cancelled for upkeep');
		const offer =
			/name="boxId" value="(\d+)"[^]*?name="start" value="([^"]+)"[^]*?name="end" value="([^"]+)"/.exec(
				page
			);
		expect(offer).not.toBeNull();
		const [, offerBox, start, end] = offer!;
		expect(new Date(end).getTime() - new Date(start).getTime()).toBe(90 * 60_000);
		expect(new Date(start).getTime()).toBeGreaterThanOrEqual(Date.now());

		const rebooked = await client.form('/bookings?/rebook', {
			fromBookingId: booking.id,
			boxId: offerBox,
			start,
			end
		});
		expect(rebooked.status).toBe(200);
		const mine = await testDb()
			.select()
			.from(bookings)
			.where(and(eq(bookings.userId, member.id), eq(bookings.status, 'confirmed')));
		expect(mine).toHaveLength(1);
		expect(mine[0]).toMatchObject({ purpose: 'Cell assembly', boxId: Number(offerBox) });
		// The same offer again now collides with the booking just made.
		expect(
			(
				await client.form('/bookings?/rebook', {
					fromBookingId: booking.id,
					boxId: offerBox,
					start,
					end
				})
			).status
		).toBe(409);
	});
});

describe('rebooking keeps the booking’s group', () => {
	it('a member of two groups rebooks and is billed to the group the cancelled booking was', async () => {
		const boxId = await makeBox();
		const [first, second] = [await makeGroup('first'), await makeGroup('second')];
		const member = await makeUser('member', { group: first.id });
		await testDb()
			.insert(groupMemberships)
			.values({ groupId: second.id, userId: member.id, status: 'active' });
		const client = await signedIn(member);
		const made = await client.post('/api/bookings', {
			boxId,
			...slot(2, 9, 60),
			purpose: 'Billed to the second group',
			groupId: second.id
		});
		expect(made.status).toBe(201);
		const { booking } = await made.json();
		const manager = await signedIn(await makeUser('manager'));
		await manager.post(`/api/boxes/${boxId}/outages`, {
			start: slot(2, 8, 0).start,
			end: slot(2, 11, 0).start,
			kind: 'leak',
			reason: 'Leak at the window seal'
		});
		const later = slot(3, 14, 60);
		const rebooked = await client.form('/bookings?/rebook', {
			fromBookingId: booking.id,
			boxId,
			start: new Date(later.start).toISOString(),
			end: new Date(later.end).toISOString()
		});
		expect(rebooked.status).toBe(200);
		const [made2] = await testDb()
			.select()
			.from(bookings)
			.where(and(eq(bookings.userId, member.id), eq(bookings.status, 'confirmed')));
		expect(made2).toMatchObject({ groupId: second.id, purpose: 'Billed to the second group' });
		// Someone else's booking cannot be rebooked from.
		const other = await signedIn(await makeUser('member'));
		const refused = await other.form('/bookings?/rebook', {
			fromBookingId: booking.id,
			boxId,
			start: new Date(later.start).toISOString(),
			end: new Date(later.end).toISOString()
		});
		expect([403, 404]).toContain(refused.status);
	});
});

describe('the outbox page', () => {
	it('a manager puts a failed message back in the queue; members may not', async () => {
		const to = await makeUser('member');
		const [row] = await testDb()
			.insert(outbox)
			.values({
				recipientId: to.id,
				toAddress: to.email,
				kind: 'staff_notice',
				subject: 'Retry me',
				textBody: 'x',
				htmlBody: '<p>x</p>',
				dedupeKey: `test:retry:${to.id}`,
				status: 'failed',
				attempts: 8,
				lastError: '550 mailbox unavailable',
				// Far ahead, so no worker sends it before the manager retries it.
				nextAttemptAt: new Date(Date.now() + 86_400_000)
			})
			.$returningId();
		const member = await signedIn(await makeUser('member'));
		expect((await member.get('/manage/outbox')).status).toBe(403);
		expect((await member.form('/manage/outbox?/retry', { id: row.id })).status).toBe(403);

		const manager = await signedIn(await makeUser('manager'));
		const page = await (await manager.get('/manage/outbox?status=failed')).text();
		expect(page).toContain('Retry me');
		expect((await manager.form('/manage/outbox?/retry', { id: row.id })).status).toBe(200);
		await until(
			async () =>
				(await testDb().select().from(outbox).where(eq(outbox.id, row.id)))[0].status === 'sent'
		);
		expect((await manager.form('/manage/outbox?/retry', { id: row.id })).status).toBe(409);
	});
});
