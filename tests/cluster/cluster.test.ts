// Two app processes on a three-node Galera cluster (issue 16): process A writes through
// HAProxy's frontend whose writer is node1, process B through the one whose writer is node2
// (tests/cluster/global-setup.ts). The tests run in order; the later ones stop a node or
// make it refuse queries. Each prints its figures at the end of the run.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { sql } from 'drizzle-orm';
import { bookings } from '../../src/lib/server/db/schema';
import { killNode, nodeSql, nodes, restartNode } from '../../scripts/lib/cluster.mjs';
import { closeTestDb, DEMO_PASSWORD, makeBox, makeUser, testDb } from '../support/db';
import { sunkMail } from '../support/mail';
import { until } from '../support/until';
import {
	bookingsOnNode,
	cluster,
	doubleHolds,
	healthyWithin,
	loadUntil,
	onNode,
	ProcessClient,
	signIn,
	Tally,
	utcSlot
} from './support';

const [urlA, urlB] = cluster.appUrls;
const figures: string[] = [];

afterAll(async () => {
	console.log(`\nCluster figures\n${figures.map((f) => `- ${f}`).join('\n')}\n`);
	await closeTestDb();
});

/** A box anyone may book, with room for a lot of bookings per person. */
const openBox = () => makeBox({ weeklyQuotaMin: 30_000, horizonDays: 365 });

/** "3 failed, 0.1 to 1.4 s after the event" (or "none failed"). */
function failed(tally: Tally, since: number) {
	if (!tally.failures.length) return 'none failed';
	const at = tally.failures.map((f) => (f.at - since) / 1000);
	const statuses = [...new Set(tally.failures.map((f) => f.status))].join('/');
	return `${at.length} failed (${statuses}), ${Math.min(...at).toFixed(1)} to ${Math.max(...at).toFixed(1)} s after it`;
}

const wait = (ms: number) => new Promise((done) => setTimeout(done, ms));
const random = (n: number) => Math.floor(Math.random() * n);

let members: ProcessClient[] = [];
let manager: ProcessClient;

beforeAll(async () => {
	const people = await Promise.all(Array.from({ length: 12 }, () => makeUser('member')));
	members = await Promise.all(people.map((p) => signIn(p.email, p.password)));
	manager = await signIn('manager@example.org', DEMO_PASSWORD);
});

/**
 * One round of the book, cancel and read flow on `boxIds` through `client`: a random slot
 * in the next 60 days, cancelled again half the time, then the box's week read back.
 */
async function flowStep(client: ProcessClient, boxIds: number[], tally: Tally, made: number[]) {
	const boxId = boxIds[random(boxIds.length)];
	const { start, end } = utcSlot(1 + random(60), random(44) * 30, 30 * (1 + random(3)));
	const created = await client.post('/api/bookings', { boxId, start, end, purpose: 'flow' });
	tally.add('book', created);
	if (created.status === 201) {
		const id = (created.body as { booking: { id: number } }).booking.id;
		made.push(id);
		if (Math.random() < 0.5) tally.add('cancel', await client.delete(`/api/bookings/${id}`));
	}
	const weekEnd = new Date(new Date(start).getTime() + 7 * 86_400_000).toISOString();
	const query = `start=${encodeURIComponent(start)}&end=${encodeURIComponent(weekEnd)}`;
	tally.add('read', await client.get(`/api/boxes/${boxId}/events?${query}`));
}

describe('two processes on two writer nodes', () => {
	it('30 races of 30 simultaneous requests for one slot, 15 per process: one 201 each, no 5xx', async () => {
		const tally = new Tally();
		const boxIds: number[] = [];
		const wrong: string[] = [];
		const races = 30;
		for (let race = 0; race < races; race++) {
			const boxId = await openBox();
			boxIds.push(boxId);
			const { start, end } = utcSlot(2 + race, 10 * 60, 60);
			const answers = await Promise.all(
				Array.from({ length: 30 }, (_, i) =>
					members[i % members.length]
						.on(i % 2 ? urlB : urlA)
						.post('/api/bookings', { boxId, start, end, purpose: `race ${race}.${i}` })
				)
			);
			for (const a of answers) tally.add('race', a);
			const statuses = answers.map((a) => a.status);
			const won = statuses.filter((s) => s === 201).length;
			const lost = statuses.filter((s) => s === 409).length;
			if (won !== 1 || lost !== 29) wrong.push(`race ${race}: ${statuses.join(' ')}`);
		}
		const held = await Promise.all([0, 1, 2].map((i) => doubleHolds(i, boxIds)));
		const doubled = wrong.filter((w) => (w.match(/201/g) ?? []).length > 1).length;
		figures.push(
			`races: ${races} × 30 requests (15 per process): ${races - wrong.length} with exactly one 201 and 29 × 409, ${doubled} with two or more 201; ${tally.summary()}; slots held twice per node: ${held.join('/')}`
		);
		expect(wrong).toEqual([]);
		expect(tally.failures).toEqual([]);
		expect(held).toEqual([0, 0, 0]);
	});

	it('a 30-second book, cancel and read flow on both processes: no 5xx, no slot held twice', async () => {
		const boxIds = await Promise.all(Array.from({ length: 4 }, openBox));
		const tally = new Tally();
		const made: number[] = [];
		const endsAt = Date.now() + 30_000;
		await loadUntil(
			16,
			(w) => flowStep(members[w % members.length].on(w % 2 ? urlB : urlA), boxIds, tally, made),
			() => Date.now() < endsAt
		);
		const held = await Promise.all([0, 1, 2].map((i) => doubleHolds(i, boxIds)));
		figures.push(
			`flow: 30 s, 16 loops (8 per process): ${tally.summary()}; ${made.length} bookings made; slots held twice: ${held.join('/')}`
		);
		expect(tally.failures).toEqual([]);
		expect(held).toEqual([0, 0, 0]);
	});

	it('40 concurrent calendar-feed requests through the balancer: no 5xx', async () => {
		const r = await members[0].on(cluster.balancerUrl).post('/api/me/feed-token');
		expect(r.status).toBe(201);
		const path = new URL((r.body as { userFeedUrl: string }).userFeedUrl).pathname;
		const tally = new Tally();
		const anonymous = new ProcessClient(cluster.balancerUrl, '');
		const answers = await Promise.all(Array.from({ length: 40 }, () => anonymous.get(path)));
		for (const a of answers) tally.add('feed', a);
		figures.push(`feeds: 40 at once through the balancer: ${tally.summary()}`);
		expect(tally.failures).toEqual([]);
		expect(tally.count(200)).toBe(40);
	});
});

describe('faults', () => {
	it('node1 killed mid-flow and restarted: B has no 5xx, health within 5 s, every booking on all three nodes', async () => {
		const boxIds = await Promise.all(Array.from({ length: 3 }, openBox));
		const tallies = { A: new Tally(), B: new Tally() };
		const made: number[] = [];
		let running = true;
		const flow = loadUntil(
			12,
			(w) =>
				flowStep(
					members[w % members.length].on(w % 2 ? urlB : urlA),
					boxIds,
					w % 2 ? tallies.B : tallies.A,
					made
				),
			() => running
		);
		await wait(3000);
		const killedAt = Date.now();
		await killNode(nodes[0]);
		// The flow goes on with node1 down, then node1 rejoins by incremental transfer.
		await wait(4000);
		const restartedAt = Date.now();
		await restartNode(nodes[0]);
		const syncedAt = Date.now();
		const healthMs = await healthyWithin([urlA, urlB], 5);
		await wait(3000);
		running = false;
		await flow;

		const onEach = await Promise.all([0, 1, 2].map((i) => bookingsOnNode(i, made)));
		const held = await Promise.all([0, 1, 2].map((i) => doubleHolds(i, boxIds)));
		figures.push(
			`node1 killed mid-flow, restarted 4 s later: synced again ${((syncedAt - restartedAt) / 1000).toFixed(1)} s after the restart began (recover + IST); ` +
				`A (writer node1): ${tallies.A.summary()}, ${failed(tallies.A, killedAt)}; ` +
				`B (writer node2): ${tallies.B.summary()} (sent ${((tallies.B.slowestSentAt - killedAt) / 1000).toFixed(1)} s after the kill), ${failed(tallies.B, killedAt)}; both healthy ${healthMs} ms after node1 synced; ` +
				`${made.length} bookings made, found on the nodes: ${onEach.map((l) => l.length).join('/')}; slots held twice: ${held.join('/')}`
		);
		expect(tallies.B.failures).toEqual([]);
		expect(onEach[0]).toHaveLength(made.length);
		expect(onEach[1]).toEqual(onEach[0]);
		expect(onEach[2]).toEqual(onEach[0]);
		expect(held).toEqual([0, 0, 0]);
	});

	it('node2 refusing queries for 25 s (wsrep_reject_queries=ALL): health answers within 5 s of it accepting again', async () => {
		const boxIds = await Promise.all(Array.from({ length: 2 }, openBox));
		const tallies = { A: new Tally(), B: new Tally() };
		const made: number[] = [];
		let running = true;
		const flow = loadUntil(
			12,
			(w) =>
				flowStep(
					members[w % members.length].on(w % 2 ? urlB : urlA),
					boxIds,
					w % 2 ? tallies.B : tallies.A,
					made
				),
			() => running
		);
		await wait(1000);
		const refusedAt = Date.now();
		await nodeSql(nodes[1], 'SET GLOBAL wsrep_reject_queries = ALL');
		try {
			await wait(25_000);
		} finally {
			await nodeSql(nodes[1], 'SET GLOBAL wsrep_reject_queries = NONE');
		}
		const acceptedAt = Date.now();
		const healthMs = await healthyWithin([urlA, urlB], 5);
		running = false;
		await flow;
		figures.push(
			`node2 refusing queries for ${((acceptedAt - refusedAt) / 1000).toFixed(1)} s: ` +
				`A: ${tallies.A.summary()}, ${failed(tallies.A, refusedAt)}; B (writer node2): ${tallies.B.summary()}, ${failed(tallies.B, refusedAt)}; ` +
				`both healthy ${healthMs} ms after it accepted again`
		);
		expect(healthMs).toBeLessThan(5000);
		const held = await Promise.all([0, 1, 2].map((i) => doubleHolds(i, boxIds)));
		expect(held).toEqual([0, 0, 0]);
	});

	it('an outage over 200 bookings on A while B books into the window (4 loops): none survives inside it, each message sent once', async () => {
		const boxId = await openBox();
		const owners = await Promise.all(Array.from({ length: 20 }, () => makeUser('member')));
		// 200 half-hour bookings, one an hour, with a free half hour after each.
		const { start: windowStart } = utcSlot(3, 0, 0);
		const base = new Date(windowStart).getTime();
		const rows = Array.from({ length: 200 }, (_, i) => {
			const startAt = new Date(base + i * 3_600_000);
			const endAt = new Date(startAt.getTime() + 30 * 60_000);
			return {
				boxId,
				userId: owners[i % owners.length].id,
				startAt,
				endAt,
				blockedUntil: endAt,
				purpose: `outage ${i}`,
				status: 'confirmed' as const
			};
		});
		await testDb().insert(bookings).values(rows);
		const window = {
			start: new Date(base).toISOString(),
			end: new Date(base + 200 * 3_600_000).toISOString()
		};

		const tally = new Tally();
		const made: number[] = [];
		let running = true;
		const booking = loadUntil(
			4,
			async (w) => {
				const gap = new Date(base + random(200) * 3_600_000 + 30 * 60_000);
				const end = new Date(gap.getTime() + 30 * 60_000);
				const a = await members[w % members.length].on(urlB).post('/api/bookings', {
					boxId,
					start: gap.toISOString(),
					end: end.toISOString(),
					purpose: 'gap'
				});
				tally.add('book', a);
				if (a.status === 201) made.push((a.body as { booking: { id: number } }).booking.id);
			},
			() => running
		);
		await until(async () => tally.total >= 10, 30);
		const outage = await manager.on(urlA).post(`/api/boxes/${boxId}/outages`, {
			...window,
			kind: 'leak',
			reason: 'Cluster test: leak at the antechamber'
		});
		// B keeps trying for a while after the outage has been answered.
		await wait(1500);
		running = false;
		await booking;
		if (outage.status !== 201) {
			figures.push(
				`outage over 200 bookings on A while B booked into the gaps: the outage answered ${outage.status} after ${Math.round(outage.ms)} ms; B ${tally.summary()}`
			);
		}
		expect(outage.status).toBe(201);
		const cancelled = (outage.body as { cancelledBookingIds: number[] }).cancelledBookingIds;

		const survivors = await Promise.all(
			[0, 1, 2].map((i) =>
				onNode(i, async (conn) => {
					const [r] = await conn.query(
						`SELECT COUNT(*) AS n FROM bookings WHERE box_id = ? AND status IN ('pending', 'confirmed')
							AND start_at < ? AND blocked_until > ?`,
						[boxId, new Date(window.end), new Date(window.start)]
					);
					return Number((r as { n: number }[])[0].n);
				})
			)
		);

		// Every message about this box's bookings leaves, once.
		const [all] = (await testDb().execute(
			sql`SELECT id FROM bookings WHERE box_id = ${boxId}`
		)) as unknown as [{ id: number }[]];
		const ids = all.map((b) => Number(b.id));
		const idSet = new Set(ids);
		const outboxRows = async () => {
			const [r] = (await testDb().execute(
				sql`SELECT id, status, dedupe_key AS dedupeKey FROM outbox WHERE dedupe_key LIKE 'booking:%'`
			)) as unknown as [{ id: number; status: string; dedupeKey: string }[]];
			return r.filter((m) => idSet.has(Number(m.dedupeKey.split(':')[1])));
		};
		await until(async () => (await outboxRows()).every((r) => r.status === 'sent'), 120);
		const messages = await outboxRows();
		const mail = sunkMail(cluster.mailDir);
		const copies = messages.map(
			(m) => mail.filter((x) => x.messageId.startsWith(`<outbox-${m.id}.`)).length
		);
		const notOnce = copies.filter((n) => n !== 1).length;
		figures.push(
			`outage over 200 bookings on A while B booked into the gaps: the outage took ${Math.round(outage.ms)} ms; B ${tally.summary()}, ${made.length} made before the outage; ` +
				`${cancelled.length} cancelled; open bookings left inside the outage per node: ${survivors.join('/')}; ` +
				`${messages.length} messages, ${notOnce} not delivered exactly once`
		);
		expect(tally.failures).toEqual([]);
		expect(survivors).toEqual([0, 0, 0]);
		expect(cancelled.length).toBe(200 + made.length);
		expect(messages.length).toBeGreaterThanOrEqual(200 + made.length);
		expect(notOnce).toBe(0);
	});
});
