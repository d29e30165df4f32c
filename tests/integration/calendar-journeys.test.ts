// The calendar both ways, over the API: a booking moved through the same rules as a new
// one (PATCH /api/bookings/:id), a weekly series (POST /api/bookings with repeatWeeks), and
// a watch on a taken time that is told once when the time frees up.
import { afterAll, describe, expect, it } from 'vitest';
import { and, eq } from 'drizzle-orm';
import {
	auditLog,
	bookings,
	bookingWatches,
	notifications,
	outbox
} from '../../src/lib/server/db/schema';
import { certifiedMemberAndBox, certify, closeTestDb, makeUser, testDb } from '../support/db';
import { errorOf, signedIn, type Client } from '../support/http';
import { slot } from '../support/time';
import { renderRow } from '../../src/lib/server/mail/render';

afterAll(closeTestDb);

type ApiBooking = { id: number; start: string; end: string; purpose: string; seriesId: number };
type Refused = { start: string; end: string; reasons: { code: string; message: string }[] };

const same = (a: string, b: string) => new Date(a).getTime() === new Date(b).getTime();
const patch = (client: Client, id: number, body: unknown) =>
	client.request('PATCH', `/api/bookings/${id}`, body);

async function book(client: Client, boxId: number, times: { start: string; end: string }) {
	const r = await client.post('/api/bookings', { boxId, ...times, purpose: 'Calendar journey' });
	expect(r.status).toBe(201);
	return ((await r.json()) as { booking: ApiBooking }).booking;
}

const row = async (id: number) =>
	(await testDb().select().from(bookings).where(eq(bookings.id, id)))[0];

/** A member certified for the same box as `moduleId`, signed in. */
async function neighbour(moduleId: number) {
	const other = await makeUser('member');
	await certify(other.id, moduleId);
	return { ...other, client: await signedIn(other) };
}

describe('PATCH /api/bookings/:id', () => {
	it('moves a booking through the rules: 200, a higher SEQUENCE and the updated invitation', async () => {
		const { user, boxId } = await certifiedMemberAndBox();
		const client = await signedIn(user);
		const booking = await book(client, boxId, slot(3, 10, 60));
		const to = slot(3, 12, 90);

		const r = await patch(client, booking.id, { ...to, purpose: 'Moved weighing' });
		expect(r.status).toBe(200);
		const moved = ((await r.json()) as { booking: ApiBooking }).booking;
		expect(same(moved.start, to.start) && same(moved.end, to.end)).toBe(true);
		expect(moved.purpose).toBe('Moved weighing');
		expect(moved.start).toMatch(/[+-]\d\d:\d\d$/);

		const stored = await row(booking.id);
		expect(stored.sequence).toBe(1);
		expect(stored.startAt.getTime()).toBe(new Date(to.start).getTime());
		const [mail] = await testDb()
			.select()
			.from(outbox)
			.where(eq(outbox.dedupeKey, `booking:${booking.id}:confirmed:1`));
		expect(mail.subject).toMatch(/^Changed: /);
		const { ics } = renderRow(mail);
		expect(ics).toContain(`UID:booking-${booking.id}@boxwright`);
		expect(ics).toContain('SEQUENCE:1');
		const entries = await testDb()
			.select()
			.from(auditLog)
			.where(and(eq(auditLog.action, 'booking.moved'), eq(auditLog.entityId, String(booking.id))));
		expect(entries).toHaveLength(1);
	});

	it('refuses a move onto a taken time with 409 and leaves the booking as it was', async () => {
		const { user, boxId, moduleId } = await certifiedMemberAndBox();
		const client = await signedIn(user);
		const other = await neighbour(moduleId);
		const taken = await book(other.client, boxId, slot(4, 10, 60));
		const mine = await book(client, boxId, slot(4, 13, 60));

		const r = await patch(client, mine.id, slot(4, 10, 60));
		expect(r.status).toBe(409);
		const err = await errorOf(r);
		expect(err.code).toBe('conflict');
		const reasons = err.details?.reasons as { code: string; conflict: { id: number } }[];
		expect(reasons.map((x) => x.code)).toEqual(['overlaps_booking']);
		expect(reasons[0].conflict.id).toBe(taken.id);

		const after = await client.get(`/api/bookings/${mine.id}`);
		const { booking } = (await after.json()) as { booking: ApiBooking };
		expect(same(booking.start, mine.start) && same(booking.end, mine.end)).toBe(true);
		expect((await row(mine.id)).sequence).toBe(0);
	});

	it('refuses a move that breaks a rule with 422 rule_refused and every reason', async () => {
		const { user, boxId } = await certifiedMemberAndBox();
		const client = await signedIn(user);
		const mine = await book(client, boxId, slot(5, 10, 60));
		const r = await patch(client, mine.id, slot(5, 10, 20, 5));
		expect(r.status).toBe(422);
		const err = await errorOf(r);
		expect(err.code).toBe('rule_refused');
		const codes = (err.details?.reasons as { code: string }[]).map((x) => x.code);
		expect(codes).toEqual(expect.arrayContaining(['bad_step', 'too_short']));
		expect((await row(mine.id)).startAt.getTime()).toBe(new Date(mine.start).getTime());
	});

	it('lets only its holder and managers change it: 403 for anyone else', async () => {
		const { user, boxId, moduleId } = await certifiedMemberAndBox();
		const mine = await book(await signedIn(user), boxId, slot(6, 10, 60));
		const other = await neighbour(moduleId);

		const r = await patch(other.client, mine.id, slot(6, 11, 60));
		expect(r.status).toBe(403);
		expect((await errorOf(r)).code).toBe('forbidden');
		expect((await row(mine.id)).startAt.getTime()).toBe(new Date(mine.start).getTime());

		const manager = await signedIn(await makeUser('manager'));
		const byManager = await patch(manager, mine.id, slot(6, 11, 60));
		expect(byManager.status).toBe(200);
	});

	it('takes a strict body: an unknown field or an empty change is 400', async () => {
		const { user, boxId } = await certifiedMemberAndBox();
		const client = await signedIn(user);
		const mine = await book(client, boxId, slot(7, 10, 60));
		const unknown = await patch(client, mine.id, { boxId: 1 });
		expect(unknown.status).toBe(400);
		expect((await errorOf(unknown)).code).toBe('invalid_input');
		expect((await patch(client, mine.id, {})).status).toBe(400);
	});

	it('does not move a cancelled booking: 409', async () => {
		const { user, boxId } = await certifiedMemberAndBox();
		const client = await signedIn(user);
		const mine = await book(client, boxId, slot(8, 10, 60));
		expect((await client.delete(`/api/bookings/${mine.id}`)).status).toBe(200);
		const r = await patch(client, mine.id, slot(8, 12, 60));
		expect(r.status).toBe(409);
	});
});

describe('POST /api/bookings with repeatWeeks', () => {
	it('books 4 weeks with one taken: 201, 3 created sharing a series, 1 refused with reasons', async () => {
		const { user, boxId, moduleId } = await certifiedMemberAndBox();
		const client = await signedIn(user);
		const other = await neighbour(moduleId);
		// The third week's slot is someone else's (the same wall-clock time, 14 days on).
		const third = slot(16, 10, 60);
		await book(other.client, boxId, third);

		const r = await client.post('/api/bookings', {
			boxId,
			...slot(2, 10, 60),
			purpose: 'Weekly glovebox work',
			repeatWeeks: 4
		});
		expect(r.status).toBe(201);
		const body = (await r.json()) as { created: ApiBooking[]; refused: Refused[] };
		expect(body.created).toHaveLength(3);
		expect(body.refused).toHaveLength(1);
		expect(same(body.refused[0].start, third.start)).toBe(true);
		expect(body.refused[0].reasons.map((x) => x.code)).toEqual(['overlaps_booking']);
		expect(body.refused[0].reasons[0].message).toBeTruthy();
		const seriesId = body.created[0].id;
		expect(body.created.map((b) => b.seriesId)).toEqual([seriesId, seriesId, seriesId]);
		for (const [i, days] of [2, 9, 23].entries())
			expect(same(body.created[i].start, slot(days, 10, 60).start)).toBe(true);
		const stored = await testDb().select().from(bookings).where(eq(bookings.seriesId, seriesId));
		expect(stored).toHaveLength(3);
	});

	it('answers 422 rule_refused with the refusals when no week can be made', async () => {
		const { boxId } = await certifiedMemberAndBox();
		const newcomer = await signedIn(await makeUser('member', { label: 'newcomer' }));
		const r = await newcomer.post('/api/bookings', {
			boxId,
			...slot(3, 9, 60),
			purpose: 'x',
			repeatWeeks: 2
		});
		expect(r.status).toBe(422);
		const err = await errorOf(r);
		expect(err.code).toBe('rule_refused');
		const refused = err.details?.refused as Refused[];
		expect(refused).toHaveLength(2);
		expect(refused[0].reasons.map((x) => x.code)).toEqual(['certification_missing']);
		const made = await testDb().select().from(bookings).where(eq(bookings.boxId, boxId));
		expect(made).toHaveLength(0);
	});

	it('refuses repeatWeeks 0 and 13 with 400 invalid_input naming the field', async () => {
		const { user, boxId } = await certifiedMemberAndBox();
		const client = await signedIn(user);
		for (const repeatWeeks of [0, 13]) {
			const r = await client.post('/api/bookings', {
				boxId,
				...slot(3, 9, 60),
				purpose: 'x',
				repeatWeeks
			});
			expect(r.status).toBe(400);
			const err = await errorOf(r);
			expect(err.code).toBe('invalid_input');
			expect(Object.keys(err.details?.fields as object)).toContain('repeatWeeks');
		}
		const made = await testDb().select().from(bookings).where(eq(bookings.boxId, boxId));
		expect(made).toHaveLength(0);
	});

	it('answers a booking without repeatWeeks as before: { booking }', async () => {
		const { user, boxId } = await certifiedMemberAndBox();
		const r = await (
			await signedIn(user)
		).post('/api/bookings', { boxId, ...slot(3, 9, 60), purpose: 'x' });
		expect(r.status).toBe(201);
		const body = await r.json();
		expect(Object.keys(body)).toEqual(['booking']);
		expect(body.booking.seriesId).toBeNull();
	});
});

describe('POST /api/boxes/:id/watches', () => {
	const noticesFor = (watchId: number) =>
		testDb()
			.select()
			.from(outbox)
			.where(eq(outbox.dedupeKey, `watch:${watchId}:freed`));

	async function watch(client: Client, boxId: number, times: { start: string; end: string }) {
		const r = await client.post(`/api/boxes/${boxId}/watches`, times);
		expect(r.status).toBe(201);
		return ((await r.json()) as { watch: { id: number; start: string; notifiedAt: null } }).watch;
	}

	it('tells the watcher once when the holder cancels and the time is free', async () => {
		const { user, boxId, moduleId } = await certifiedMemberAndBox();
		const holder = await signedIn(user);
		const watcher = await neighbour(moduleId);
		const held = await book(holder, boxId, slot(9, 10, 120));
		const w = await watch(watcher.client, boxId, slot(9, 10, 60));
		expect(w.notifiedAt).toBeNull();
		expect(same(w.start, slot(9, 10, 60).start)).toBe(true);
		expect(await noticesFor(w.id)).toHaveLength(0);

		expect((await holder.delete(`/api/bookings/${held.id}`)).status).toBe(200);
		const [mail] = await noticesFor(w.id);
		expect(mail.recipientId).toBe(watcher.id);
		expect(mail.subject).toMatch(/^Free now: /);
		const inApp = await testDb()
			.select()
			.from(notifications)
			.where(and(eq(notifications.userId, watcher.id), eq(notifications.kind, 'watch_freed')));
		expect(inApp).toHaveLength(1);
		const [stored] = await testDb()
			.select()
			.from(bookingWatches)
			.where(eq(bookingWatches.id, w.id));
		expect(stored.notifiedAt).not.toBeNull();

		// Taken and freed again: the watch has had its one notice.
		const again = await book(holder, boxId, slot(9, 10, 60));
		expect((await holder.delete(`/api/bookings/${again.id}`)).status).toBe(200);
		expect(await noticesFor(w.id)).toHaveLength(1);
		const still = await testDb()
			.select()
			.from(notifications)
			.where(and(eq(notifications.userId, watcher.id), eq(notifications.kind, 'watch_freed')));
		expect(still).toHaveLength(1);
	});

	it('stays quiet while another booking still holds part of the time, and tells when it goes', async () => {
		const { user, boxId, moduleId } = await certifiedMemberAndBox();
		const first = await signedIn(user);
		const second = await neighbour(moduleId);
		const watcher = await neighbour(moduleId);
		const early = await book(first, boxId, slot(10, 10, 60));
		const late = await book(second.client, boxId, slot(10, 11, 60));
		const w = await watch(watcher.client, boxId, slot(10, 10, 120));

		expect((await first.delete(`/api/bookings/${early.id}`)).status).toBe(200);
		expect(await noticesFor(w.id)).toHaveLength(0);
		const [waiting] = await testDb()
			.select()
			.from(bookingWatches)
			.where(eq(bookingWatches.id, w.id));
		expect(waiting.notifiedAt).toBeNull();

		expect((await second.client.delete(`/api/bookings/${late.id}`)).status).toBe(200);
		expect(await noticesFor(w.id)).toHaveLength(1);
	});

	it('tells at once about a time that is already free, and only once', async () => {
		const { user, boxId } = await certifiedMemberAndBox();
		const client = await signedIn(user);
		const r = await client.post(`/api/boxes/${boxId}/watches`, slot(11, 10, 60));
		expect(r.status).toBe(201);
		const { watch: w } = (await r.json()) as { watch: { id: number; notifiedAt: string } };
		expect(w.notifiedAt).not.toBeNull();
		expect(await noticesFor(w.id)).toHaveLength(1);
	});

	it('takes a strict body and refuses a time already past', async () => {
		const { user, boxId } = await certifiedMemberAndBox();
		const client = await signedIn(user);
		const unknown = await client.post(`/api/boxes/${boxId}/watches`, {
			...slot(3, 9, 60),
			note: 'x'
		});
		expect(unknown.status).toBe(400);
		const past = await client.post(`/api/boxes/${boxId}/watches`, slot(-2, 9, 60));
		expect(past.status).toBe(400);
		expect((await errorOf(past)).code).toBe('invalid_input');
		const missing = await client.post('/api/boxes/99999999/watches', slot(3, 9, 60));
		expect(missing.status).toBe(404);
		const mine = await testDb()
			.select()
			.from(bookingWatches)
			.where(eq(bookingWatches.userId, user.id));
		expect(mine).toHaveLength(0);
	});
});
