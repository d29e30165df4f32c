// The booking decision under the load it is built for (services/booking-decision.ts): many
// requests at once for one box, through the built app and the real MariaDB. Fixed dates in
// 2030 on boxes open ten years ahead, so the ISO weeks and the wall clock are the same on
// every run; the outcome of a race may differ between runs, the guarantees may not.
import { afterAll, describe, expect, it } from 'vitest';
import { and, eq, inArray, sql } from 'drizzle-orm';
import { auditLog, bookings, outbox } from '../../src/lib/server/db/schema';
import { certify, closeTestDb, makeBox, makeModule, makeUser, testDb } from '../support/db';
import { Client, errorOf, signedIn } from '../support/http';
import { sunkMail } from '../support/mail';
import { until } from '../support/until';

afterAll(closeTestDb);

const TEN_YEARS = 3650;
/** Monday 4 March 2030 00:00 in Berlin (UTC+01:00), the start of ISO week 10. */
const WEEK_10 = Date.parse('2030-03-04T00:00:00+01:00');
const at = (minutes: number) => new Date(WEEK_10 + minutes * 60_000);

/** `count` members certified for a fresh box with these rules, each signed in. */
async function membersOf(count: number, box: Parameters<typeof makeBox>[0] = {}) {
	const moduleId = await makeModule('race');
	const boxId = await makeBox({ horizonDays: TEN_YEARS, ...box, modules: [moduleId] });
	const clients: Client[] = [];
	const ids: number[] = [];
	for (let n = 0; n < count; n++) {
		const user = await makeUser('member');
		await certify(user.id, moduleId, new Date('2029-01-01Z'), new Date('2031-01-01Z'));
		clients.push(await signedIn(user));
		ids.push(user.id);
	}
	return { boxId, clients, ids };
}

const ask = (client: Client, boxId: number, start: Date, end: Date, extra = {}) =>
	client.post('/api/bookings', {
		boxId,
		start: start.toISOString(),
		end: end.toISOString(),
		purpose: 'Race',
		...extra
	});

/** A small fixed pseudo-random sequence (a linear congruential generator), the same every run. */
function sequence(seed: number) {
	let state = seed;
	return (n: number) => {
		state = (state * 1_103_515_245 + 12_345) % 2 ** 31;
		return state % n;
	};
}

describe('one slot, many requests', () => {
	it('twenty simultaneous requests: one 201 with its audit entry and its message, nineteen 409', async () => {
		const { boxId, clients, ids } = await membersOf(20);
		const start = at(9 * 60);
		const end = at(10 * 60);
		const answers = await Promise.all(clients.map((c) => ask(c, boxId, start, end)));
		const statuses = answers.map((r) => r.status).sort();
		expect(statuses).toEqual([201, ...Array(19).fill(409)]);
		for (const refused of answers.filter((r) => r.status === 409))
			expect((await errorOf(refused)).code).toBe('conflict');

		const made = await testDb().select().from(bookings).where(eq(bookings.boxId, boxId));
		expect(made).toHaveLength(1);
		const [booking] = made;
		expect(ids).toContain(booking.userId);
		const entries = await testDb()
			.select()
			.from(auditLog)
			.where(
				and(eq(auditLog.action, 'booking.created'), eq(auditLog.entityId, String(booking.id)))
			);
		expect(entries).toHaveLength(1);
		const [message] = await testDb()
			.select()
			.from(outbox)
			.where(eq(outbox.dedupeKey, `booking:${booking.id}:confirmed:0`));
		expect(message.recipientId).toBe(booking.userId);
		expect(message.template).toBe('booking_confirmed');
		// Rendered by the worker when it sends: the invitation carries the booking's UID.
		await until(async () =>
			sunkMail().some((m) => m.raw.includes(`UID:booking-${booking.id}@boxwright`))
		);
	});
});

describe('four hundred overlapping requests', () => {
	it('no two held bookings overlap, purge included, and every answer is 201 or 409', async () => {
		// Purge after volatile solvents: 45 min; lengths 30 min to 2 h on the 15-minute grid,
		// starts within two days, so requests collide often in slot and in purge.
		const { boxId, clients } = await membersOf(8, {
			purgeMin: 45,
			maxLengthMin: 480,
			weeklyQuotaMin: 10_000
		});
		const pick = sequence(17);
		const requests = Array.from({ length: 400 }, (_, n) => {
			const start = at(8 * 60 + pick(4 * 24 * 2) * 15);
			const end = new Date(start.getTime() + (2 + pick(7)) * 15 * 60_000);
			return { client: clients[n % clients.length], start, end, volatile: pick(3) === 0 };
		});
		const answers = await Promise.all(
			requests.map((r) => ask(r.client, boxId, r.start, r.end, { volatileSolvents: r.volatile }))
		);
		const statuses = new Set(answers.map((r) => r.status));
		expect([...statuses].every((s) => s === 201 || s === 409)).toBe(true);
		const created = answers.filter((r) => r.status === 201).length;
		expect(created).toBeGreaterThan(0);

		const held = await testDb()
			.select()
			.from(bookings)
			.where(and(eq(bookings.boxId, boxId), inArray(bookings.status, ['pending', 'confirmed'])));
		expect(held).toHaveLength(created);
		// The hold is [start, blocked_until): the slot and, after volatile solvents, the purge.
		for (const a of held) {
			expect(a.blockedUntil.getTime()).toBe(
				a.endAt.getTime() + (a.volatileSolvents ? 45 * 60_000 : 0)
			);
			for (const b of held) {
				if (a.id < b.id) {
					const overlap = a.startAt < b.blockedUntil && b.startAt < a.blockedUntil;
					expect(overlap, `bookings ${a.id} and ${b.id} overlap`).toBe(false);
				}
			}
		}
	});
});

describe('one person racing their own quota', () => {
	it('ten simultaneous half hours against a two-hour week: four made, six refused as quota_exceeded', async () => {
		const { boxId, clients } = await membersOf(1, { weeklyQuotaMin: 120 });
		const [client] = clients;
		// Ten separate half hours in week 10, none touching another.
		const answers = await Promise.all(
			Array.from({ length: 10 }, (_, n) => {
				const start = at(24 * 60 + n * 120);
				return ask(client, boxId, start, new Date(start.getTime() + 30 * 60_000));
			})
		);
		const made = answers.filter((r) => r.status === 201);
		const refused = answers.filter((r) => r.status !== 201);
		expect(made).toHaveLength(4);
		expect(refused).toHaveLength(6);
		for (const r of refused) {
			expect(r.status).toBe(422);
			const error = await errorOf(r);
			const codes = (error.details as { reasons: { code: string }[] }).reasons.map((x) => x.code);
			expect(codes).toEqual(['quota_exceeded']);
		}
		const held = await testDb().select().from(bookings).where(eq(bookings.boxId, boxId));
		const minutes = held.reduce(
			(sum, b) => sum + (b.endAt.getTime() - b.startAt.getTime()) / 60_000,
			0
		);
		expect(minutes).toBe(120);
	});
});

describe('a request nobody is signed in for', () => {
	it('is refused with 401 without queueing on the box lock', async () => {
		const { boxId } = await membersOf(1);
		const stranger = new Client();
		// A cookie shaped like a session's, for no session at all.
		stranger.setCookie('bw_session', 'A'.repeat(43));
		const start = at(30 * 60);
		const end = at(31 * 60);
		// Another transaction holds the box lock until the stranger has been answered: were the
		// stranger's request to take it, it would wait here until the lock wait timed out.
		await testDb().transaction(async (tx) => {
			await tx.execute(sql`UPDATE boxes SET lock_version = lock_version + 1 WHERE id = ${boxId}`);
			const answer = await ask(stranger, boxId, start, end);
			expect(answer.status).toBe(401);
			expect(await errorOf(answer)).toEqual({ code: 'unauthenticated', message: 'Sign in first.' });
		});
	});
});
