// The box's phone page (/boxes/:id/here), opened from its printed label: sign-in and back,
// who holds the box as the calendar would show it, and the actions done at the box through
// the same rules as elsewhere (check-in, readings, damage reports).
import { afterAll, describe, expect, it } from 'vitest';
import { and, desc, eq } from 'drizzle-orm';
import {
	atmosphereReadings,
	bookings,
	gloveInspections,
	gloves,
	users
} from '../../src/lib/server/db/schema';
import {
	certifiedMemberAndBox,
	closeTestDb,
	fitGloves,
	makeBox,
	makeUser,
	testDb
} from '../support/db';
import { Client, signedIn } from '../support/http';

afterAll(closeTestDb);

/** A confirmed booking starting `startOffsetMin` from now (to the minute), an hour long. */
async function booking(userId: number, boxId: number, startOffsetMin: number, purpose: string) {
	const startAt = new Date(Math.floor(Date.now() / 60_000) * 60_000 + startOffsetMin * 60_000);
	const endAt = new Date(startAt.getTime() + 3_600_000);
	const [row] = await testDb()
		.insert(bookings)
		.values({ boxId, userId, startAt, endAt, blockedUntil: endAt, purpose, status: 'confirmed' })
		.$returningId();
	return row.id;
}

async function named(role: 'member' | 'manager', name: string) {
	const user = await makeUser(role);
	await testDb().update(users).set({ name }).where(eq(users.id, user.id));
	return user;
}

const unique = () => Math.random().toString(36).slice(2, 8);

describe('the box’s phone page', () => {
	it('sends someone not signed in to sign in, and back to the page afterwards, never off the site', async () => {
		const boxId = await makeBox();
		const path = `/boxes/${boxId}/here`;
		const anonymous = new Client();
		const first = await anonymous.get(path);
		expect(first.status).toBe(303);
		expect(first.headers.get('location')).toBe(`/signin?next=${encodeURIComponent(path)}`);

		const user = await makeUser('member');
		const signIn = await anonymous.form(`/signin?next=${encodeURIComponent(path)}`, {
			email: user.email,
			password: user.password
		});
		expect(signIn.status).toBe(303);
		expect(signIn.headers.get('location')).toBe(path);
		expect((await anonymous.get(path)).status).toBe(200);

		for (const next of ['/\\evil.example/x', '//evil.example/x', 'https://evil.example/x']) {
			const other = new Client();
			const r = await other.form(`/signin?next=${encodeURIComponent(next)}`, {
				email: user.email,
				password: user.password
			});
			expect(r.status, next).toBe(303);
			expect(r.headers.get('location'), next).toBe('/');
		}
	});

	it('shows who holds the box now and next as the calendar does: names, never others’ purposes', async () => {
		const boxId = await makeBox();
		const nowName = `Holder ${unique()}`;
		const nextName = `Follower ${unique()}`;
		const holder = await named('member', nowName);
		const follower = await named('member', nextName);
		const secret = `Secret synthesis ${unique()}`;
		// Checked in, so the scheduler's no-show run (it polls every few hundred ms in tests)
		// cannot free the slot under the test.
		const held = await booking(holder.id, boxId, -20, secret);
		await testDb()
			.update(bookings)
			.set({ checkInAt: new Date(Date.now() - 15 * 60_000) })
			.where(eq(bookings.id, held));
		await booking(follower.id, boxId, 180, `Other secret ${unique()}`);

		const viewer = await signedIn(await makeUser('member'));
		const page = await (await viewer.get(`/boxes/${boxId}/here`)).text();
		expect(page).toContain(nowName);
		expect(page).toContain(nextName);
		expect(page).not.toContain(secret);
		expect(page).not.toContain('Other secret');

		// A manager sees the purpose, as on the calendar.
		const manager = await signedIn(await makeUser('manager'));
		expect(await (await manager.get(`/boxes/${boxId}/here`)).text()).toContain(secret);
	});

	it('checks in and out of one’s own booking on this box, and says when check-in opens', async () => {
		const { user, boxId } = await certifiedMemberAndBox();
		const member = await signedIn(user);
		const id = await booking(user.id, boxId, 5, 'Phone check-in');
		const path = `/boxes/${boxId}/here`;

		// Another box's booking is not checked in from here; another person's is refused.
		const elsewhere = await makeBox();
		const away = await booking(user.id, elsewhere, 5, 'Elsewhere');
		const wrongBox = await member.form(`${path}?/checkIn`, {
			bookingId: away,
			o2Ppm: '0.4',
			h2oPpm: '0.3'
		});
		expect(wrongBox.status).toBe(404);
		const stranger = await signedIn(await makeUser('member'));
		const notMine = await stranger.form(`${path}?/checkIn`, {
			bookingId: id,
			o2Ppm: '0.4',
			h2oPpm: '0.3'
		});
		expect(notMine.status).toBe(403);

		// A reading the domain refuses is a field message, nothing is checked in.
		const bad = await member.form(`${path}?/checkIn`, {
			bookingId: id,
			o2Ppm: '-1',
			h2oPpm: '0.3'
		});
		expect(bad.status).toBe(400);
		expect(await bad.text()).toContain('O₂ cannot be negative.');

		const checkIn = await member.form(`${path}?/checkIn`, {
			bookingId: id,
			o2Ppm: '0,4',
			h2oPpm: '0.3'
		});
		expect(checkIn.status).toBe(200);
		expect(await checkIn.text()).toContain('Checked in at');
		const twice = await member.form(`${path}?/checkIn`, {
			bookingId: id,
			o2Ppm: '0.4',
			h2oPpm: '0.3'
		});
		expect(twice.status).toBe(409);
		expect(await twice.text()).toContain('This booking is already checked in.');
		const checkOut = await member.form(`${path}?/checkOut`, {
			bookingId: id,
			o2Ppm: '0.5',
			h2oPpm: '0.3'
		});
		expect(checkOut.status).toBe(200);
		const [row] = await testDb().select().from(bookings).where(eq(bookings.id, id));
		expect(row.checkInAt).not.toBeNull();
		expect(row.checkOutAt).not.toBeNull();
		const readings = await testDb()
			.select({ source: atmosphereReadings.source, o2: atmosphereReadings.o2Ppm })
			.from(atmosphereReadings)
			.where(eq(atmosphereReadings.bookingId, id));
		expect(readings.map((r) => r.source).sort()).toEqual(['check_in', 'check_out']);
		expect(readings.find((r) => r.source === 'check_in')?.o2).toBe(0.4);

		// A booking later today: the reason, and when check-in opens.
		await booking(user.id, boxId, 180, 'Later today');
		const later = await (await member.get(path)).text();
		expect(later).toContain('Check-in opens 15 minutes before the booking starts.');
		expect(later).toContain('It opens at');
	});

	it('logs a reading typed with a decimal comma as the box’s latest', async () => {
		const boxId = await makeBox();
		const member = await signedIn(await makeUser('member'));
		const r = await member.form(`/boxes/${boxId}/here?/reading`, { o2Ppm: '0,35', h2oPpm: '0.21' });
		expect(r.status).toBe(200);
		expect(await r.text()).toContain('Reading recorded');
		const [latest] = await testDb()
			.select()
			.from(atmosphereReadings)
			.where(eq(atmosphereReadings.boxId, boxId))
			.orderBy(desc(atmosphereReadings.at))
			.limit(1);
		expect(latest).toMatchObject({ o2Ppm: 0.35, h2oPpm: 0.21, source: 'manual' });
	});

	it('reports damage on the port tapped on the box face, and asks for the port when none was', async () => {
		const boxId = await makeBox();
		const [, right] = await fitGloves(boxId);
		const member = await signedIn(await makeUser('member'));
		const path = `/boxes/${boxId}/here?/damage`;
		const report = { location: 'knuckle', hand: 'right', holeSizeMm: '12' };

		const noPort = await member.form(path, report);
		expect(noPort.status).toBe(400);
		expect(await noPort.text()).toContain('Tap the port whose glove is damaged.');

		const otherBox = await makeBox();
		const [foreign] = await fitGloves(otherBox);
		const wrong = await member.form(path, { ...report, portId: foreign.id });
		expect(wrong.status).toBe(404);

		const done = await member.form(path, { ...report, portId: right.id });
		expect(done.status).toBe(200);
		const text = await done.text();
		expect(text).toContain('Catastrophic failure');
		expect(text).toContain('supports, and does not replace');
		const [glove] = await testDb().select().from(gloves).where(eq(gloves.portId, right.id));
		const recorded = await testDb()
			.select()
			.from(gloveInspections)
			.where(and(eq(gloveInspections.gloveId, glove.id), eq(gloveInspections.damaged, true)));
		expect(recorded).toHaveLength(1);
		expect(recorded[0]).toMatchObject({ location: 'knuckle', hand: 'right', holeSizeMm: 12 });
	});
});
