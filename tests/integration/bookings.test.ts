import { afterAll, describe, expect, it } from 'vitest';
import { and, eq, sql } from 'drizzle-orm';
import { auditLog, bookings, outages, outbox } from '../../src/lib/server/db/schema';
import { renderRow } from '../../src/lib/server/mail/render';
import {
	certifiedMemberAndBox,
	certify,
	closeTestDb,
	makeBox,
	makeModule,
	makeUser,
	testDb
} from '../support/db';
import { Client, errorOf, signedIn } from '../support/http';
import { slot } from '../support/time';

afterAll(closeTestDb);

const bookingCount = async (boxId: number) => {
	const [{ n }] = await testDb()
		.select({ n: sql<number>`count(*)` })
		.from(bookings)
		.where(eq(bookings.boxId, boxId));
	return Number(n);
};

describe('POST /api/bookings', () => {
	it('books a free slot: 201 with the booking, times in the facility zone', async () => {
		const { user, boxId } = await certifiedMemberAndBox();
		const client = await signedIn(user);
		const { start, end } = slot(3, 10, 90);
		const r = await client.post('/api/bookings', { boxId, start, end, purpose: 'Weighing' });
		expect(r.status).toBe(201);
		const { booking } = await r.json();
		expect(booking).toMatchObject({
			boxId,
			userId: user.id,
			status: 'confirmed',
			purpose: 'Weighing'
		});
		expect(new Date(booking.start).getTime()).toBe(new Date(start).getTime());
		expect(booking.start).toMatch(/[+-]\d\d:\d\d$/);
		const entries = await testDb()
			.select()
			.from(auditLog)
			.where(
				and(eq(auditLog.action, 'booking.created'), eq(auditLog.entityId, String(booking.id)))
			);
		expect(entries).toHaveLength(1);
		// The confirmation, queued with the booking, invites to the booking's own UID.
		const [mail] = await testDb()
			.select()
			.from(outbox)
			.where(eq(outbox.dedupeKey, `booking:${booking.id}:confirmed:0`));
		expect(mail.icsMethod).toBe('REQUEST');
		const { ics } = renderRow(mail);
		expect(ics).toContain(`UID:booking-${booking.id}@boxwright`);
		expect(ics).toContain('METHOD:REQUEST');
	});

	it('50 simultaneous requests for the same slot: exactly one 201 and 49 × 409, no 5xx', async () => {
		const moduleId = await makeModule('race');
		const boxId = await makeBox({ modules: [moduleId] });
		const people = await Promise.all(Array.from({ length: 5 }, () => makeUser('member')));
		await Promise.all(people.map((p) => certify(p.id, moduleId)));
		const clients = await Promise.all(people.map(signedIn));
		const { start, end } = slot(4, 14, 60);

		const responses = await Promise.all(
			Array.from({ length: 50 }, (_, i) =>
				clients[i % clients.length].post('/api/bookings', {
					boxId,
					start,
					end,
					purpose: `race ${i}`
				})
			)
		);
		const statuses = responses.map((r) => r.status);
		expect(statuses.filter((s) => s === 201)).toHaveLength(1);
		expect(statuses.filter((s) => s === 409)).toHaveLength(49);
		const refused = responses.find((r) => r.status === 409)!;
		const err = await errorOf(refused);
		expect(err.code).toBe('conflict');
		expect((err.details?.conflicts as unknown[]).length).toBeGreaterThan(0);
		expect(await bookingCount(boxId)).toBe(1);
	});

	it('refuses a newcomer without the certification: 422 certification_missing', async () => {
		const moduleId = await makeModule('gate');
		const boxId = await makeBox({ modules: [moduleId] });
		const newcomer = await makeUser('member', { label: 'newcomer' });
		const client = await signedIn(newcomer);
		const r = await client.post('/api/bookings', {
			boxId,
			...slot(2, 9, 60),
			purpose: 'First try'
		});
		expect(r.status).toBe(422);
		const err = await errorOf(r);
		expect(err.code).toBe('rule_refused');
		const reasons = err.details?.reasons as { code: string; message: string }[];
		expect(reasons.map((x) => x.code)).toEqual(['certification_missing']);
		expect(reasons[0].message).toMatch(/certification/);
		expect(await bookingCount(boxId)).toBe(0);
	});

	it('refuses when the certification expires during the booking: certification_expires', async () => {
		const moduleId = await makeModule('expiring');
		const boxId = await makeBox({ modules: [moduleId] });
		const user = await makeUser('member');
		const { start, end } = slot(5, 10, 120);
		const midway = new Date((new Date(start).getTime() + new Date(end).getTime()) / 2);
		await certify(user.id, moduleId, new Date(Date.now() - 86_400_000), midway);
		const r = await (
			await signedIn(user)
		).post('/api/bookings', { boxId, start, end, purpose: 'x' });
		expect(r.status).toBe(422);
		const reasons = (await errorOf(r)).details?.reasons as { code: string }[];
		expect(reasons.map((x) => x.code)).toEqual(['certification_expires']);
	});

	it('lists every broken rule at once', async () => {
		const { user, boxId } = await certifiedMemberAndBox({ excludedClasses: ['mercury'] });
		const { start } = slot(2, 10);
		const end = slot(2, 15, 5).end; // 5 h 05 min: too long and off the grid
		const r = await (
			await signedIn(user)
		).post('/api/bookings', {
			boxId,
			start,
			end,
			purpose: 'x',
			chemicalClasses: ['mercury']
		});
		expect(r.status).toBe(422);
		const codes = ((await errorOf(r)).details?.reasons as { code: string }[]).map((x) => x.code);
		expect(codes).toEqual(['bad_step', 'too_long', 'excluded_chemical']);
	});

	it('refuses a box in atmosphere alarm or out of service', async () => {
		const alarm = await certifiedMemberAndBox({ atmosphereState: 'alarm' });
		const r1 = await (
			await signedIn(alarm.user)
		).post('/api/bookings', { boxId: alarm.boxId, ...slot(2, 9), purpose: 'x' });
		expect(((await errorOf(r1)).details?.reasons as { code: string }[]).map((x) => x.code)).toEqual(
			['atmosphere_alarm']
		);

		const oos = await certifiedMemberAndBox({ status: 'out_of_service' });
		const r2 = await (
			await signedIn(oos.user)
		).post('/api/bookings', { boxId: oos.boxId, ...slot(2, 9), purpose: 'x' });
		expect(((await errorOf(r2)).details?.reasons as { code: string }[]).map((x) => x.code)).toEqual(
			['box_out_of_service']
		);
	});

	it('refuses a slot inside an outage, and one in the purge after volatile solvents', async () => {
		const { user, boxId, moduleId } = await certifiedMemberAndBox();
		const client = await signedIn(user);
		const first = slot(6, 9, 60);
		const made = await client.post('/api/bookings', {
			boxId,
			...first,
			purpose: 'solvent work',
			volatileSolvents: true
		});
		expect(made.status).toBe(201);
		expect((await made.json()).booking.purgeUntil).not.toBeNull();

		const other = await makeUser('member');
		await certify(other.id, moduleId);
		const inPurge = await (
			await signedIn(other)
		).post('/api/bookings', { boxId, ...slot(6, 10, 60, 15), purpose: 'x' });
		expect(inPurge.status).toBe(409);
		expect(
			((await errorOf(inPurge)).details?.reasons as { code: string }[]).map((x) => x.code)
		).toEqual(['overlaps_purge']);

		const window = slot(7, 8, 240);
		await testDb()
			.insert(outages)
			.values({
				boxId,
				startAt: new Date(window.start),
				endAt: new Date(window.end),
				kind: 'regeneration',
				reason: 'Purifier regeneration'
			});
		const inOutage = await client.post('/api/bookings', { boxId, ...slot(7, 9, 60), purpose: 'x' });
		expect(inOutage.status).toBe(422);
		const reasons = (await errorOf(inOutage)).details?.reasons as {
			code: string;
			message: string;
		}[];
		expect(reasons.map((x) => x.code)).toEqual(['box_out_of_service']);
		expect(reasons[0].message).toContain('Purifier regeneration');
	});

	it('answers bad input with invalid_input and field messages, and saves nothing', async () => {
		const { user, boxId } = await certifiedMemberAndBox();
		const client = await signedIn(user);
		const { start, end } = slot(2, 9);

		const notIso = await client.post('/api/bookings', {
			boxId,
			start: 'next tuesday',
			end,
			purpose: 'x'
		});
		expect(notIso.status).toBe(400);
		expect((await errorOf(notIso)).details?.fields).toHaveProperty('start');

		const noOffset = await client.post('/api/bookings', {
			boxId,
			start: start.slice(0, 19),
			end,
			purpose: 'x'
		});
		expect(noOffset.status).toBe(400);

		const backwards = await client.post('/api/bookings', {
			boxId,
			start: end,
			end: start,
			purpose: 'x'
		});
		expect(backwards.status).toBe(400);
		expect((await errorOf(backwards)).details?.fields).toEqual({
			end: 'The end must be after the start.'
		});

		const missing = await client.post('/api/bookings', { boxId });
		expect(missing.status).toBe(400);
		expect(Object.keys((await errorOf(missing)).details?.fields as object).sort()).toEqual([
			'end',
			'purpose',
			'start'
		]);

		const malformed = await client.post('/api/bookings', '{"boxId": 1,');
		expect(malformed.status).toBe(400);

		const noBox = await client.post('/api/bookings', { boxId: 99999999, start, end, purpose: 'x' });
		expect(noBox.status).toBe(404);
		expect((await errorOf(noBox)).code).toBe('not_found');

		const past = await client.post('/api/bookings', { boxId, ...slot(-1, 9), purpose: 'x' });
		expect(past.status).toBe(422);
		expect(
			((await errorOf(past)).details?.reasons as { code: string }[]).map((x) => x.code)
		).toContain('start_in_past');

		expect(await bookingCount(boxId)).toBe(0);
	});

	it('needs a session', async () => {
		const r = await new Client().post('/api/bookings', { boxId: 1, ...slot(2, 9), purpose: 'x' });
		expect(r.status).toBe(401);
		expect((await errorOf(r)).code).toBe('unauthenticated');
	});
});

describe('DELETE /api/bookings/:id', () => {
	it('lets the owner cancel, raises the sequence and frees the slot', async () => {
		const { user, boxId } = await certifiedMemberAndBox();
		const client = await signedIn(user);
		const times = slot(3, 13);
		const { booking } = await (
			await client.post('/api/bookings', { boxId, ...times, purpose: 'x' })
		).json();
		const r = await client.delete(`/api/bookings/${booking.id}`);
		expect(r.status).toBe(200);
		expect((await r.json()).booking).toMatchObject({ status: 'cancelled', cancelCause: 'user' });
		const [row] = await testDb().select().from(bookings).where(eq(bookings.id, booking.id));
		expect(row.sequence).toBe(1);
		expect((await client.post('/api/bookings', { boxId, ...times, purpose: 'again' })).status).toBe(
			201
		);
		expect((await client.delete(`/api/bookings/${booking.id}`)).status).toBe(409);
	});

	it("refuses to cancel another user's booking (403), lets a manager do it", async () => {
		const { user, boxId } = await certifiedMemberAndBox();
		const { booking } = await (
			await (await signedIn(user)).post('/api/bookings', { boxId, ...slot(3, 9), purpose: 'x' })
		).json();
		const stranger = await signedIn(await makeUser('member'));
		const refused = await stranger.delete(`/api/bookings/${booking.id}`);
		expect(refused.status).toBe(403);
		expect((await errorOf(refused)).code).toBe('forbidden');
		const manager = await signedIn(await makeUser('manager'));
		const done = await manager.delete(`/api/bookings/${booking.id}`);
		expect((await done.json()).booking.cancelCause).toBe('manager');
		expect((await stranger.delete('/api/bookings/99999999')).status).toBe(404);
		expect((await stranger.delete('/api/bookings/abc')).status).toBe(404);
	});
});

describe('approval', () => {
	it('a box that needs approval holds the slot as pending until a manager confirms it', async () => {
		const { user, boxId, moduleId } = await certifiedMemberAndBox({ needsApproval: true });
		const times = slot(4, 10);
		const made = await (
			await signedIn(user)
		).post('/api/bookings', { boxId, ...times, purpose: 'cells' });
		expect(made.status).toBe(201);
		const { booking } = await made.json();
		expect(booking.status).toBe('pending');

		const rival = await makeUser('member');
		await certify(rival.id, moduleId);
		const held = await (
			await signedIn(rival)
		).post('/api/bookings', { boxId, ...times, purpose: 'mine' });
		expect(held.status).toBe(409);
		expect(
			((await errorOf(held)).details?.reasons as { code: string }[]).map((x) => x.code)
		).toEqual(['overlaps_pending']);

		const manager = await signedIn(await makeUser('manager'));
		expect(
			(await manager.form('/manage/approvals?/approveBooking', { bookingId: booking.id })).status
		).toBe(200);
		const [row] = await testDb().select().from(bookings).where(eq(bookings.id, booking.id));
		expect(row.status).toBe('confirmed');
		const [mail] = await testDb()
			.select()
			.from(outbox)
			.where(eq(outbox.dedupeKey, `booking:${booking.id}:confirmed:1`));
		expect(renderRow(mail).ics).toContain('SEQUENCE:1');
		const member = await signedIn(await makeUser('member'));
		expect(
			(await member.form('/manage/approvals?/approveBooking', { bookingId: booking.id })).status
		).toBe(403);
	});
});

describe('GET /api/boxes and events', () => {
	it('lists boxes with status and latest reading', async () => {
		const { user, boxId } = await certifiedMemberAndBox();
		const client = await signedIn(user);
		await client.post(`/api/boxes/${boxId}/readings`, { o2Ppm: 0.4, h2oPpm: 0.7 });
		const r = await client.get('/api/boxes');
		expect(r.status).toBe(200);
		const { boxes } = await r.json();
		expect(boxes.length).toBeGreaterThan(0);
		expect(boxes[0]).toHaveProperty('condition');
		expect(boxes[0]).toHaveProperty('latestReading');
		const mine = boxes.find((b: { id: number }) => b.id === boxId);
		expect(mine.condition).toBe('in_service');
		expect(mine.latestReading).toMatchObject({ o2Ppm: 0.4, h2oPpm: 0.7 });
	});

	it('returns bookings, purge buffers and outages in the range; yours marked', async () => {
		const { user, boxId } = await certifiedMemberAndBox();
		const client = await signedIn(user);
		await client.post('/api/bookings', {
			boxId,
			...slot(3, 9),
			purpose: 'solvent',
			volatileSolvents: true
		});
		const day = slot(3, 0, 24 * 60);
		const r = await client.get(
			`/api/boxes/${boxId}/events?start=${encodeURIComponent(day.start)}&end=${encodeURIComponent(day.end)}`
		);
		expect(r.status).toBe(200);
		const { events } = await r.json();
		expect(events.map((e: { kind: string }) => e.kind).sort()).toEqual(['booking', 'purge']);
		expect(events.find((e: { kind: string }) => e.kind === 'booking')).toMatchObject({
			mine: true,
			title: 'You: solvent'
		});

		const other = await (
			await signedIn(await makeUser('member'))
		).get(
			`/api/boxes/${boxId}/events?start=${encodeURIComponent(day.start)}&end=${encodeURIComponent(day.end)}`
		);
		const seen = (await other.json()).events.find((e: { kind: string }) => e.kind === 'booking');
		expect(seen).toMatchObject({ mine: false, title: 'Test member' });

		const all = await client.get(
			`/api/events?start=${encodeURIComponent(day.start)}&end=${encodeURIComponent(day.end)}`
		);
		expect((await all.json()).events.some((e: { boxId: number }) => e.boxId === boxId)).toBe(true);

		expect((await client.get(`/api/boxes/${boxId}/events?start=yesterday&end=now`)).status).toBe(
			400
		);
		expect(
			(
				await client.get(
					`/api/boxes/99999999/events?start=${encodeURIComponent(day.start)}&end=${encodeURIComponent(day.end)}`
				)
			).status
		).toBe(404);
		expect(
			(
				await new Client().get(
					`/api/boxes/${boxId}/events?start=${encodeURIComponent(day.start)}&end=${encodeURIComponent(day.end)}`
				)
			).status
		).toBe(401);
	});
});
