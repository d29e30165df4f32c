// The booking decisions of bench:booking and bench:cluster: five targets measured in
// alternating rounds on one database, medians printed with their ratios to the bare
// node:http + mysql2 endpoint (baseline-booking.mjs):
//
//   bare 409        the bare endpoint on a taken slot (BEGIN, FOR UPDATE, overlap read,
//                   ROLLBACK)
//   bare 201        the bare endpoint on free slots, spread over the boxes as `free` is
//   bare 201, 1 box the bare endpoint on free slots of a single box, all on its lock: how
//                   the first measurements took "bare 201"
//   floor           POST /api/bench/floor: SvelteKit, the hooks and the session check, a 409
//                   without the database (the app runs with BENCH_FLOOR=1)
//   taken           POST /api/bookings on a taken slot: a 409 after the whole decision
//   free            POST /api/bookings on free slots: a booking, its audit entry and its
//                   confirmation's outbox row
//
// Free slots are spread over `boxCount` boxes and 20 people, so successes do not queue on
// one box's lock and nobody reaches the weekly quota.
import autocannon from 'autocannon';
import { log } from '../../lib/setup.mjs';

/**
 * `count` members (copies of the demo member, with its password) signed in through `appUrl`.
 * @param {import('mysql2/promise').Connection} sql
 * @param {string} appUrl
 * @param {number} count
 * @param {string} label
 * @param {Record<string, string>} [extraHeaders]
 */
export async function signedInPeople(sql, appUrl, count, label, extraHeaders = {}) {
	/** @type {{ id: number, cookie: string }[]} */
	const people = [];
	for (let n = 0; n < count; n++) {
		const email = `${label}${n}-${Date.now().toString(36)}@example.org`;
		const [r] = /** @type {any} */ (
			await sql.query(
				"INSERT INTO users (email, name, password_hash, role, status) SELECT ?, ?, password_hash, 'member', 'active' FROM users WHERE email = 'member@example.org'",
				[email, `${label} ${n}`]
			)
		);
		const signIn = await fetch(`${appUrl}/api/session`, {
			method: 'POST',
			headers: { 'content-type': 'application/json', ...extraHeaders },
			body: JSON.stringify({ email, password: 'demo-pass-2026' })
		});
		if (signIn.status !== 200) throw new Error(`sign-in gave ${signIn.status}`);
		const cookie = signIn.headers
			.getSetCookie()
			.map((c) => c.split(';')[0])
			.join('; ');
		people.push({ id: r.insertId, cookie });
	}
	return people;
}

/**
 * @param {{ sql: import('mysql2/promise').Connection, appUrl: string, bareUrl: string,
 *   rounds: number, seconds: number, connections: number, boxCount: number,
 *   extraHeaders?: Record<string, string> }} o
 */
export async function measureDecisions(o) {
	const { sql, rounds, seconds, connections, boxCount } = o;
	// Open boxes with no training gate, bookable more than a year ahead.
	const makeBox = async (/** @type {string} */ name) => {
		const [r] = /** @type {any} */ (
			await sql.query(
				'INSERT INTO boxes (name, room, gas, volume_l, horizon_days) VALUES (?, ?, ?, ?, 400)',
				[name, 'Bench', 'Ar', 1000]
			)
		);
		return /** @type {number} */ (r.insertId);
	};
	const boxes = async (/** @type {string} */ label) => {
		const ids = [];
		for (let n = 0; n < boxCount; n++) ids.push(await makeBox(`Bench ${label} ${n}`));
		return ids;
	};
	const appBoxes = await boxes('app');
	const baseBoxes = await boxes('baseline');
	const baseSingle = await makeBox('Bench baseline, one box');
	const appTaken = await makeBox('Bench app, taken');
	const baseTaken = await makeBox('Bench baseline, taken');
	const [[member]] = /** @type {any} */ (
		await sql.query("SELECT id FROM users WHERE email = 'member@example.org'")
	);

	// Twenty people, signed in, each held to the boxes' default weekly quota.
	const people = await signedInPeople(sql, o.appUrl, 20, 'bench', o.extraHeaders);

	const startAt = new Date();
	startAt.setUTCHours(24, 0, 0, 0);
	const halfHour = (/** @type {number} */ n) => {
		const start = new Date(startAt.getTime() + n * 30 * 60_000);
		return { start, end: new Date(start.getTime() + 30 * 60_000) };
	};
	/** @param {{ boxId: number, start: Date, end: Date }} slot @param {{ id: number, cookie: string }} person */
	const ask = (req, slot, person) => {
		req.headers = { ...req.headers, ...o.extraHeaders, cookie: person.cookie };
		req.body = JSON.stringify({
			boxId: slot.boxId,
			userId: person.id,
			start: slot.start.toISOString(),
			end: slot.end.toISOString(),
			purpose: 'bench'
		});
		return req;
	};
	/**
	 * Request n: box n mod B, that box's next free half hour, the next person in turn. The
	 * half hours are spread over the year as a facility's calendar is (day after day with a
	 * stride of 37, coprime to 364, then the next half hour of each day), so a box holds a
	 * few bookings a day by the end of the run; consecutive half hours would pack 48 a day
	 * into every box and every lookback of the decision (a week and a half of the box).
	 */
	const freeSlots = (/** @type {number[]} */ boxIds) => {
		let n = 0;
		return (/** @type {any} */ req) => {
			const box = n % boxIds.length;
			const step = Math.floor(n++ / boxIds.length);
			const day = 2 + ((step * 37) % 364);
			const slot = halfHour(day * 48 + Math.floor(step / 364));
			return ask(req, { boxId: boxIds[box], ...slot }, people[step % people.length]);
		};
	};
	// One half hour a day on, held on each "taken" box; everyone asks for it.
	const taken = halfHour(48);
	await sql.query(
		"INSERT INTO bookings (box_id, user_id, start_at, end_at, blocked_until, purpose, status) VALUES (?, ?, ?, ?, ?, 'held', 'confirmed'), (?, ?, ?, ?, ?, 'held', 'confirmed')",
		[appTaken, member.id, taken.start, taken.end, taken.end].concat([
			baseTaken,
			member.id,
			taken.start,
			taken.end,
			taken.end
		])
	);
	const takenSlot = (/** @type {number} */ boxId) => {
		let n = 0;
		return (/** @type {any} */ req) => ask(req, { boxId, ...taken }, people[n++ % people.length]);
	};

	const headers = { 'content-type': 'application/json' };
	const targets = [
		{ name: 'bare 409', url: o.bareUrl, path: '/', setup: takenSlot(baseTaken), expect: 409 },
		{ name: 'bare 201', url: o.bareUrl, path: '/', setup: freeSlots(baseBoxes), expect: 201 },
		{ name: 'bare 1 box', url: o.bareUrl, path: '/', setup: freeSlots([baseSingle]), expect: 201 },
		{
			name: 'floor',
			url: o.appUrl,
			path: '/api/bench/floor',
			setup: takenSlot(appTaken),
			expect: 409
		},
		{
			name: 'taken',
			url: o.appUrl,
			path: '/api/bookings',
			setup: takenSlot(appTaken),
			expect: 409
		},
		{ name: 'free', url: o.appUrl, path: '/api/bookings', setup: freeSlots(appBoxes), expect: 201 }
	];
	/** @type {Map<string, any[]>} */
	const runs = new Map(targets.map((t) => [t.name, []]));
	const unexpected = new Map(targets.map((t) => [t.name, 0]));
	log(
		`booking decisions: ${rounds} rounds of ${seconds} s per target, ${connections} connections…`
	);
	for (let round = 0; round < rounds; round++) {
		for (const t of targets) {
			const r = await autocannon({
				url: t.url,
				connections,
				duration: seconds,
				requests: [{ method: 'POST', path: t.path, headers, setupRequest: t.setup }]
			});
			runs.get(t.name)?.push(r);
			const answered = r.statusCodeStats?.[t.expect]?.count ?? 0;
			unexpected.set(
				t.name,
				(unexpected.get(t.name) ?? 0) + r.requests.total - answered + r.errors
			);
		}
	}
	const median = (/** @type {number[]} */ values) => {
		const sorted = [...values].sort((a, b) => a - b);
		return sorted[Math.floor(sorted.length / 2)];
	};
	const rate = (/** @type {string} */ name) =>
		median((runs.get(name) ?? []).map((r) => r.requests.average));
	const p99 = (/** @type {string} */ name) =>
		median((runs.get(name) ?? []).map((r) => r.latency.p99));
	/** @type {Record<string, string>} */
	const label = {
		'bare 409': 'bare node:http + mysql2, taken slot (409)',
		'bare 201': 'bare node:http + mysql2, free slots (201)',
		'bare 1 box': 'bare, free slots of one box (201)',
		floor: 'SvelteKit + session check, 409 (no database)',
		taken: 'POST /api/bookings, taken slot (409)',
		free: 'POST /api/bookings, free slots (201)'
	};
	/** @type {Record<string, string>} */
	const versus = {
		'bare 409': 'bare 409',
		'bare 201': 'bare 201',
		'bare 1 box': 'bare 201',
		floor: 'bare 409',
		taken: 'bare 409',
		free: 'bare 201'
	};
	console.log(
		`\nBooking decisions: medians of ${rounds} alternating rounds of ${seconds} s, ${connections} connections`
	);
	console.log(
		`${'target'.padEnd(48)} ${'req/s'.padStart(7)} ${'p99 ms'.padStart(7)}  vs bare   unexpected answers`
	);
	for (const t of targets) {
		const ratio = rate(t.name) / rate(versus[t.name]);
		console.log(
			`${label[t.name].padEnd(48)} ${rate(t.name).toFixed(0).padStart(7)} ${String(p99(t.name)).padStart(7)}  ${ratio.toFixed(2).padStart(5)}    ${unexpected.get(t.name)}`
		);
	}
	console.log(
		`taken slot ${(rate('taken') / rate('bare 409')).toFixed(2)} of bare (aim ≥ 0.6, goal 0.8); free slots ${(rate('free') / rate('bare 201')).toFixed(2)} of bare on as many boxes (aim ≥ 0.4, goal 0.5), ${(rate('free') / rate('bare 1 box')).toFixed(2)} of bare on one box`
	);
	const [[{ made }]] = /** @type {any} */ (
		await sql.query('SELECT COUNT(*) AS made FROM bookings WHERE box_id IN (?)', [appBoxes])
	);
	const [[{ doubled }]] = /** @type {any} */ (
		await sql.query(
			`SELECT COUNT(*) AS doubled FROM bookings a JOIN bookings b ON a.box_id = b.box_id AND a.id < b.id
			 AND a.start_at < b.blocked_until AND b.start_at < a.blocked_until
			 WHERE a.box_id IN (?) AND a.status IN ('pending', 'confirmed') AND b.status IN ('pending', 'confirmed')`,
			[[...appBoxes, appTaken]]
		)
	);
	console.log(`bookings made by Boxwright: ${made}; overlapping pairs among them: ${doubled}`);
	return { appBoxes, baseBoxes, cookie: people[0].cookie };
}
