import { afterAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import ICAL from 'ical.js';
import { DateTime } from 'luxon';
import { bookings, users } from '../../src/lib/server/db/schema';
import { closeTestDb, makeBox, makeUser, testDb } from '../support/db';
import { Client, baseUrl, errorOf, signedIn } from '../support/http';
import { facilityTz, slot } from '../support/time';

afterAll(closeTestDb);

async function book(
	userId: number,
	boxId: number,
	startIso: string,
	hours = 1,
	purpose = 'Feed test'
) {
	const startAt = new Date(startIso);
	const endAt = new Date(startAt.getTime() + hours * 3_600_000);
	const [row] = await testDb()
		.insert(bookings)
		.values({ boxId, userId, startAt, endAt, blockedUntil: endAt, purpose, status: 'confirmed' })
		.$returningId();
	return row.id;
}

async function tokenFor(user: { email: string; password: string }) {
	const client = await signedIn(user);
	const r = await client.post('/api/me/feed-token');
	expect(r.status).toBe(201);
	return { client, ...((await r.json()) as { token: string; userFeedUrl: string }) };
}

/** Parses a feed with ical.js (an independent implementation) and registers its zones. */
function parse(text: string) {
	const calendar = new ICAL.Component(ICAL.parse(text));
	for (const vtz of calendar.getAllSubcomponents('vtimezone')) {
		ICAL.TimezoneService.register(new ICAL.Timezone(vtz));
	}
	const events = calendar.getAllSubcomponents('vevent').map((v) => new ICAL.Event(v));
	return { calendar, events };
}

const feedPath = (url: string) => new URL(url).pathname;

/** Midnight of the first day after today on which the zone's offset differs from today's. */
function nextClockChange(zone: string) {
	let day = DateTime.now().setZone(zone).startOf('day');
	const offset = day.offset;
	while (day.plus({ days: 1 }).startOf('day').offset === offset) day = day.plus({ days: 1 });
	return day.plus({ days: 1 }).startOf('day');
}

describe('GET /ical/users/:token.ics', () => {
	it('serves the person’s bookings in the facility zone, across a daylight-saving change', async () => {
		const member = await makeUser('member');
		const boxId = await makeBox({ name: `Feed box ${Date.now()}` });
		// The next clock change in Berlin (always within the feed's year ahead): 09:00 local two
		// days before it and the day after it are an hour apart in UTC.
		const change = nextClockChange('Europe/Berlin');
		const localBefore = change.minus({ days: 2 }).set({ hour: 9 });
		const localAfter = change.plus({ days: 1 }).set({ hour: 9 });
		expect(localBefore.offset).not.toBe(localAfter.offset);
		const before = await book(member.id, boxId, localBefore.toUTC().toISO()!);
		const after = await book(member.id, boxId, localAfter.toUTC().toISO()!);
		const { userFeedUrl, token } = await tokenFor(member);
		expect(token).toMatch(/^[A-Za-z0-9_-]{43}$/);

		const r = await fetch(userFeedUrl.replace(/^https?:\/\/[^/]+/, baseUrl));
		expect(r.status).toBe(200);
		expect(r.headers.get('content-type')).toBe('text/calendar; charset=utf-8');
		const text = await r.text();
		expect(text).toContain(
			`DTSTART;TZID=Europe/Berlin:${localBefore.toFormat("yyyyMMdd'T'HHmmss")}`
		);
		expect(text).toContain(
			`DTSTART;TZID=Europe/Berlin:${localAfter.toFormat("yyyyMMdd'T'HHmmss")}`
		);
		expect(text).toMatch(/^X-WR-CALNAME:Boxwright: my box time\r?$/m);
		expect(text).toMatch(/^(REFRESH-INTERVAL|X-PUBLISHED-TTL)[;:].*PT15M/m);
		expect(text).toContain('BEGIN:VTIMEZONE');

		const { events } = parse(text);
		const byUid = new Map(events.map((e) => [e.uid, e]));
		expect(byUid.get(`booking-${before}@boxwright`)!.startDate.toJSDate().toISOString()).toBe(
			localBefore.toUTC().toISO()
		);
		expect(byUid.get(`booking-${after}@boxwright`)!.startDate.toJSDate().toISOString()).toBe(
			localAfter.toUTC().toISO()
		);
		for (const e of events) {
			expect(e.component.getFirstPropertyValue('dtstamp')).toBeTruthy();
			expect(e.component.getFirstPropertyValue('last-modified')).toBeTruthy();
		}
		// RFC 5545 §3.1: no line longer than 75 octets, CRLF endings.
		for (const line of text.split('\r\n'))
			expect(Buffer.byteLength(line, 'utf8')).toBeLessThanOrEqual(75);
	});

	it('keeps a booking cancelled by an outage as STATUS:CANCELLED with the reason and a raised SEQUENCE', async () => {
		const member = await makeUser('member');
		const boxId = await makeBox();
		const { start } = slot(5, 9, 60);
		const id = await book(member.id, boxId, start);
		const { userFeedUrl } = await tokenFor(member);
		const manager = await signedIn(await makeUser('manager'));
		const reason =
			'Purifier regeneration, with a rather long explanation so that the line must fold';
		expect(
			(
				await manager.post(`/api/boxes/${boxId}/outages`, {
					...slot(5, 8, 180),
					kind: 'regeneration',
					reason
				})
			).status
		).toBe(201);

		const text = await (await fetch(baseUrl + feedPath(userFeedUrl))).text();
		const event = parse(text).events.find((e) => e.uid === `booking-${id}@boxwright`)!;
		expect(event.component.getFirstPropertyValue('status')).toBe('CANCELLED');
		expect(event.sequence).toBe(1);
		expect(event.description).toContain(reason);
		for (const line of text.split('\r\n'))
			expect(Buffer.byteLength(line, 'utf8')).toBeLessThanOrEqual(75);
	});

	it('answers 304 to a repeated request, and 200 again after a change', async () => {
		const member = await makeUser('member');
		const boxId = await makeBox();
		const id = await book(member.id, boxId, slot(6, 9).start);
		const { userFeedUrl } = await tokenFor(member);
		const url = baseUrl + feedPath(userFeedUrl);
		const first = await fetch(url);
		const etag = first.headers.get('etag')!;
		const lastModified = first.headers.get('last-modified')!;
		expect(etag).toBeTruthy();
		expect((await fetch(url, { headers: { 'if-none-match': etag } })).status).toBe(304);
		expect((await fetch(url, { headers: { 'if-modified-since': lastModified } })).status).toBe(304);

		await testDb()
			.update(bookings)
			.set({ purpose: 'Changed', sequence: 1 })
			.where(eq(bookings.id, id));
		const changed = await fetch(url, { headers: { 'if-none-match': etag } });
		expect(changed.status).toBe(200);
		expect(await changed.text()).toContain('SEQUENCE:1');
	});

	it('a revoked, malformed or unknown token, or a suspended person’s, gets 404 with no hint', async () => {
		const member = await makeUser('member');
		const old = await tokenFor(member);
		const fresh = await old.client.post('/api/me/feed-token');
		const { userFeedUrl } = await fresh.json();
		expect((await fetch(baseUrl + feedPath(userFeedUrl))).status).toBe(200);

		const answers = await Promise.all([
			fetch(baseUrl + feedPath(old.userFeedUrl)),
			fetch(`${baseUrl}/ical/users/not-a-token.ics`),
			fetch(`${baseUrl}/ical/users/${'A'.repeat(43)}.ics`)
		]);
		const bodies = await Promise.all(answers.map((a) => errorOf(a)));
		expect(answers.map((a) => a.status)).toEqual([404, 404, 404]);
		expect(new Set(bodies.map((b) => b.message)).size).toBe(1);

		await testDb().update(users).set({ status: 'suspended' }).where(eq(users.id, member.id));
		expect((await fetch(baseUrl + feedPath(userFeedUrl))).status).toBe(404);
	});

	it('rate-limits a token that is polled far too often (429)', async () => {
		const { userFeedUrl } = await tokenFor(await makeUser('member'));
		const url = baseUrl + feedPath(userFeedUrl);
		const statuses: number[] = [];
		for (let i = 0; i < 61; i++) statuses.push((await fetch(url)).status);
		expect(statuses.slice(0, 60).every((s) => s === 200)).toBe(true);
		const last = await fetch(url);
		expect(last.status).toBe(429);
		expect(Number(last.headers.get('retry-after'))).toBeGreaterThan(0);
	});
});

describe('GET /ical/boxes/:boxId.ics', () => {
	it('lists every booking with the booker’s name (no e-mail) and every outage', async () => {
		const booker = await makeUser('member');
		const boxId = await makeBox();
		const id = await book(booker.id, boxId, slot(7, 10).start);
		const manager = await signedIn(await makeUser('manager'));
		await manager.post(`/api/boxes/${boxId}/outages`, {
			...slot(8, 8, 120),
			kind: 'sensor',
			reason: 'Sensor calibration'
		});

		const { token } = await tokenFor(await makeUser('member'));
		const r = await fetch(`${baseUrl}/ical/boxes/${boxId}.ics?token=${token}`);
		expect(r.status).toBe(200);
		const text = await r.text();
		expect(text).not.toContain(booker.email);
		const { events } = parse(text);
		expect(events.find((e) => e.uid === `booking-${id}@boxwright`)!.summary).toContain(
			'Test member'
		);
		expect(events.some((e) => e.summary.includes('out of service: Sensor fault'))).toBe(true);

		expect((await fetch(`${baseUrl}/ical/boxes/99999999.ics?token=${token}`)).status).toBe(404);
		expect((await fetch(`${baseUrl}/ical/boxes/${boxId}.ics?token=wrong`)).status).toBe(404);
		expect((await fetch(`${baseUrl}/ical/boxes/${boxId}.ics`)).status).toBe(404);
		expect((await new Client().post('/api/me/feed-token')).status).toBe(401);
	});
});

describe('feed timestamps', () => {
	// RFC 5545 3.8.7.1-3.8.7.3: DTSTAMP, LAST-MODIFIED and CREATED are UTC date-times (a
	// trailing Z), even in a feed whose events are written in the facility zone.
	it('writes every DTSTAMP, LAST-MODIFIED and CREATED in UTC, in both kinds of feed', async () => {
		const member = await makeUser('member');
		const boxId = await makeBox();
		const id = await book(member.id, boxId, slot(9, 10).start);
		const manager = await signedIn(await makeUser('manager'));
		expect(
			(
				await manager.post(`/api/boxes/${boxId}/outages`, {
					...slot(10, 8, 120),
					kind: 'sensor',
					reason: 'Sensor calibration'
				})
			).status
		).toBe(201);
		const { userFeedUrl, token } = await tokenFor(member);
		const [booking] = await testDb()
			.select({ updatedAt: bookings.updatedAt })
			.from(bookings)
			.where(eq(bookings.id, id));
		const stamp = DateTime.fromJSDate(booking.updatedAt, { zone: 'utc' }).toFormat(
			"yyyyMMdd'T'HHmmss'Z'"
		);

		const feeds = await Promise.all([
			fetch(baseUrl + feedPath(userFeedUrl)).then((r) => r.text()),
			fetch(`${baseUrl}/ical/boxes/${boxId}.ics?token=${token}`).then((r) => r.text())
		]);
		for (const text of feeds) {
			// Unfolded (RFC 5545 3.1), so a folded value is read whole.
			const lines = text.replace(/\r\n[ \t]/g, '').split('\r\n');
			const stamped = lines.filter((l) => /^(DTSTAMP|LAST-MODIFIED|CREATED)[;:]/.test(l));
			const events = lines.filter((l) => l === 'BEGIN:VEVENT').length;
			expect(events).toBeGreaterThan(0);
			expect(lines.filter((l) => l.startsWith('DTSTAMP')).length).toBe(events);
			for (const line of stamped) expect(line).toMatch(/^[A-Z-]+:\d{8}T\d{6}Z$/);
			expect(lines).toContain(`DTSTAMP:${stamp}`);
			expect(lines).toContain(`LAST-MODIFIED:${stamp}`);
			// The events themselves stay on the facility's clock.
			expect(text).toContain(`DTSTART;TZID=${facilityTz}:`);
			expect(lines).toContain(`X-WR-TIMEZONE:${facilityTz}`);
			expect(text).toContain('BEGIN:VTIMEZONE');
		}
	});
});
