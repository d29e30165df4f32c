// Every answer of POST /api/bookings, status and body, pinned in a snapshot that was written
// by the booking path as it stood before the fast path (services/booking-decision.ts)
// replaced it: the rewrite must answer every refusal exactly as before, and the 401 before
// the 400. The requests use fixed dates in March 2030 (a box opened ten years ahead), so
// the messages' days, times and week numbers are the same on every run; the ids and names
// each test creates are replaced by placeholders.
import { afterAll, describe, expect, it } from 'vitest';
import {
	boxes,
	boxRequiredModules,
	outages,
	trainingModules
} from '../../src/lib/server/db/schema';
import { eq } from 'drizzle-orm';
import {
	certify,
	closeTestDb,
	makeBox,
	makeGroup,
	makeModule,
	makeUser,
	testDb
} from '../support/db';
import { Client, signedIn } from '../support/http';

afterAll(closeTestDb);

// Monday 4 March 2030 (ISO week 10), Europe/Berlin on UTC+01:00 until 31 March.
const at = (day: number, hhmm: string) =>
	`2030-03-${String(day).padStart(2, '0')}T${hhmm}:00+01:00`;
const TEN_YEARS = 3650;

/** Ids this test made and names it invented, as placeholders; the rest kept as answered. */
function normalise(body: unknown, names: Record<string, string> = {}): unknown {
	const text = Object.entries(names).reduce(
		(t, [name, placeholder]) => t.split(name).join(placeholder),
		JSON.stringify(body)
	);
	return JSON.parse(text, (key, value) =>
		['id', 'boxId', 'userId', 'groupId', 'seriesId'].includes(key) && typeof value === 'number'
			? `<${key}>`
			: value
	);
}

async function answer(client: Client, body: unknown, names?: Record<string, string>) {
	const r = await client.post('/api/bookings', body);
	return { status: r.status, body: normalise(await r.json(), names) };
}

/** A member certified for a fresh box open ten years ahead, with the given rules. */
async function setting(
	box: Partial<typeof boxes.$inferInsert> = {},
	certifiedUntil = new Date('2031-01-01T00:00:00Z')
) {
	const moduleId = await makeModule('answers');
	const boxId = await makeBox({ horizonDays: TEN_YEARS, ...box, modules: [moduleId] });
	const user = await makeUser('member');
	await certify(user.id, moduleId, new Date('2029-01-01T00:00:00Z'), certifiedUntil);
	const client = await signedIn(user);
	const [{ name: moduleName }] = await testDb()
		.select({ name: trainingModules.name })
		.from(trainingModules)
		.where(eq(trainingModules.id, moduleId));
	return { boxId, user, client, moduleId, names: { [moduleName]: '<module>' } };
}

const request = (boxId: number, day: number, from: string, to: string, extra = {}) => ({
	boxId,
	start: at(day, from),
	end: at(day, to),
	purpose: 'Answer check',
	...extra
});

describe('POST /api/bookings answers exactly as before', () => {
	it('401 without a session, before any look at the body', async () => {
		const anonymous = new Client();
		expect(await answer(anonymous, request(1, 4, '10:00', '11:00'))).toMatchSnapshot('valid');
		expect(await answer(anonymous, { boxId: 'x' })).toMatchSnapshot('invalid');
		const malformed = await anonymous.request('POST', '/api/bookings', '{not json');
		expect({ status: malformed.status, body: await malformed.json() }).toMatchSnapshot('malformed');
	});

	it('400 for bad input: fields named, malformed JSON, a group that is not yours', async () => {
		const { boxId, client } = await setting();
		expect(
			await answer(client, { boxId, start: 'tomorrow', end: at(4, '09:00'), purpose: '' })
		).toMatchSnapshot('fields');
		expect(await answer(client, request(boxId, 4, '11:00', '10:00'))).toMatchSnapshot('order');
		const malformed = await client.request('POST', '/api/bookings', '{not json');
		expect({ status: malformed.status, body: await malformed.json() }).toMatchSnapshot('malformed');
		const other = await makeGroup('answers');
		expect(
			await answer(client, request(boxId, 4, '10:00', '11:00', { groupId: other.id }))
		).toMatchSnapshot('group');
		expect(
			await answer(client, { ...request(boxId, 4, '10:00', '11:00'), colour: 'red' })
		).toMatchSnapshot('unknown field');
	});

	it('404 for a box that does not exist', async () => {
		const { client } = await setting();
		expect(await answer(client, request(2_000_000_000, 4, '10:00', '11:00'))).toMatchSnapshot();
	});

	it('422 for each rule, and every broken rule at once', async () => {
		const newcomer = await makeUser('member');
		const gated = await setting();
		expect(
			await answer(await signedIn(newcomer), request(gated.boxId, 4, '10:00', '11:00'), gated.names)
		).toMatchSnapshot('certification_missing');

		// Held from 2029 until 10:30 on the day (09:30 UTC), half-way through the booking.
		const expiring = await setting({}, new Date('2030-03-04T09:30:00Z'));
		expect(
			await answer(expiring.client, request(expiring.boxId, 4, '10:00', '11:00'), expiring.names)
		).toMatchSnapshot('certification_expires');

		const out = await setting({ status: 'out_of_service' });
		expect(await answer(out.client, request(out.boxId, 4, '10:00', '11:00'))).toMatchSnapshot(
			'box_out_of_service'
		);
		const alarm = await setting({ atmosphereState: 'alarm' });
		expect(await answer(alarm.client, request(alarm.boxId, 4, '10:00', '11:00'))).toMatchSnapshot(
			'atmosphere_alarm'
		);

		const { boxId, client, names } = await setting({
			weeklyQuotaMin: 90,
			excludedClasses: ['mercury', 'phosphines']
		});
		const past = { boxId, start: '2020-03-02T10:00:00+01:00', end: '2020-03-02T11:00:00+01:00' };
		expect(await answer(client, { ...past, purpose: 'Past' }, names)).toMatchSnapshot(
			'start_in_past'
		);
		const near = await setting({ horizonDays: 14 });
		expect(await answer(near.client, request(near.boxId, 4, '10:00', '11:00'))).toMatchSnapshot(
			'outside_horizon'
		);
		expect(await answer(client, request(boxId, 4, '10:10', '11:10'))).toMatchSnapshot('bad_step');
		expect(await answer(client, request(boxId, 4, '10:00', '10:15'))).toMatchSnapshot('too_short');
		expect(await answer(client, request(boxId, 4, '08:00', '12:15'))).toMatchSnapshot('too_long');
		expect(
			await answer(
				client,
				request(boxId, 4, '10:00', '11:00', { chemicalClasses: ['mercury', 'phosphines'] })
			)
		).toMatchSnapshot('excluded_chemical');

		expect((await answer(client, request(boxId, 5, '10:00', '11:00'))).status).toBe(201);
		expect(await answer(client, request(boxId, 6, '10:00', '11:00'))).toMatchSnapshot(
			'quota_exceeded'
		);
		expect(
			await answer(client, request(boxId, 7, '09:10', '14:00', { chemicalClasses: ['mercury'] }))
		).toMatchSnapshot('all at once');
	});

	it('409 for a booking, a pending booking, a purge either way; an outage is a rule (422)', async () => {
		const { boxId, client, user } = await setting();
		const first = await answer(
			client,
			request(boxId, 4, '10:00', '11:00', { volatileSolvents: true })
		);
		expect(first).toMatchSnapshot('201');
		const rival = await makeUser('member');
		const [{ moduleId }] = await testDb()
			.select({ moduleId: boxRequiredModules.moduleId })
			.from(boxRequiredModules)
			.where(eq(boxRequiredModules.boxId, boxId));
		await certify(rival.id, moduleId, new Date('2029-01-01Z'), new Date('2031-01-01Z'));
		const other = await signedIn(rival);
		expect(await answer(other, request(boxId, 4, '10:30', '11:30'))).toMatchSnapshot(
			'overlaps_booking'
		);
		expect(await answer(other, request(boxId, 4, '11:00', '11:30'))).toMatchSnapshot(
			'overlaps_purge after theirs'
		);
		expect(
			await answer(other, request(boxId, 4, '09:00', '10:00', { volatileSolvents: true }))
		).toMatchSnapshot('overlaps_purge after mine');
		expect(user.id).toBeGreaterThan(0);

		const approval = await setting({ needsApproval: true });
		expect(
			(await answer(approval.client, request(approval.boxId, 4, '10:00', '11:00'))).status
		).toBe(201);
		const second = await makeUser('member');
		await certify(second.id, approval.moduleId, new Date('2029-01-01Z'), new Date('2031-01-01Z'));
		expect(
			await answer(await signedIn(second), request(approval.boxId, 4, '10:30', '11:30'))
		).toMatchSnapshot('overlaps_pending');

		const closed = await setting();
		await testDb()
			.insert(outages)
			.values({
				boxId: closed.boxId,
				startAt: new Date('2030-03-04T08:00:00Z'),
				endAt: new Date('2030-03-04T12:00:00Z'),
				kind: 'glove_change',
				reason: 'Glove change on the front-left port'
			});
		expect(await answer(closed.client, request(closed.boxId, 4, '10:00', '11:00'))).toMatchSnapshot(
			'outage'
		);
		await testDb().delete(outages).where(eq(outages.boxId, closed.boxId));
	});

	it('a weekly series: made weeks, refused weeks (a wall time the clocks skip), none at all', async () => {
		const { boxId, client } = await setting();
		// Sunday 24 March 2030, 02:00–03:00; on 31 March 02:00–03:00 does not exist in Berlin.
		const series = {
			boxId,
			start: '2030-03-24T02:00:00+01:00',
			end: '2030-03-24T03:00:00+01:00',
			purpose: 'Series',
			repeatWeeks: 3
		};
		expect(await answer(client, series)).toMatchSnapshot('partly made');
		expect(await answer(client, series)).toMatchSnapshot('none made');
	});
});
