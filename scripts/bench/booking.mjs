// `npm run bench:booking`: the booking decision against a bare node:http + mysql2 endpoint
// (baseline-booking.mjs: BEGIN, box FOR UPDATE, overlap read, then ROLLBACK + 409 or
// INSERT + COMMIT + 201), in one run on one database, targets alternating round by round
// (BENCH_ROUNDS rounds of BENCH_SECONDS each, medians), autocannon at BENCH_CONNECTIONS:
//
//   bare 409        the bare endpoint on a taken slot
//   bare 201        the bare endpoint on free slots
//   floor           POST /api/bench/floor: SvelteKit, the hooks and the session check, a 409
//                   without the database (BENCH_FLOOR=1)
//   taken           POST /api/bookings on a taken slot: a 409 after the whole decision
//   free            POST /api/bookings on free slots: a booking, its audit entry and its
//                   confirmation's outbox row (rendered later by the worker, off here)
//
// Free slots are spread over BENCH_BOXES boxes and 20 people, so successes do not queue on
// one box's lock and nobody reaches the weekly quota. Then the events endpoint for one week
// with 1,000 and with 100,000 bookings in the table. Ratios are printed.
import autocannon from 'autocannon';
import { spawn } from 'node:child_process';
import mysql from 'mysql2/promise';
import {
	ensureBuild,
	ensureDatabase,
	ensureDependencies,
	loadEnvFile,
	log,
	migrate,
	root,
	seed,
	waitForHttp
} from '../lib/setup.mjs';

loadEnvFile();
ensureDependencies();
const db = await ensureDatabase({ database: 'boxwright_bench', fresh: true });
migrate(db.url);
seed(db.url);
ensureBuild();

const seconds = Number(process.env.BENCH_SECONDS ?? 4);
const rounds = Number(process.env.BENCH_ROUNDS ?? 5);
const connections = Number(process.env.BENCH_CONNECTIONS ?? 20);
const boxCount = Number(process.env.BENCH_BOXES ?? 20);
const appPort = 3201;
const basePort = 3202;
const env = { ...process.env, DATABASE_URL: db.url, FACILITY_TZ: 'Europe/Berlin' };
// BENCH_PROFILE=1 writes a CPU profile of the app to .data/prof/ for a look at hot paths.
const profile = process.env.BENCH_PROFILE ? ['--cpu-prof', '--cpu-prof-dir=.data/prof'] : [];
const app = spawn('node', [...profile, 'build'], {
	cwd: root,
	stdio: ['ignore', 'ignore', 'inherit'],
	env: {
		...env,
		PORT: String(appPort),
		ORIGIN: `http://127.0.0.1:${appPort}`,
		BENCH_FLOOR: '1',
		// The worker renders and sends the queued confirmations; here nothing would take them.
		OUTBOX_WORKER: 'off',
		SCHEDULER: 'off',
		LOG_LEVEL: 'warn'
	}
});
const baseline = spawn('node', ['scripts/bench/baseline-booking.mjs'], {
	cwd: root,
	stdio: ['ignore', 'pipe', 'inherit'],
	env: { ...env, PORT: String(basePort) }
});
const baselineReady = new Promise((done) =>
	baseline.stdout.on('data', (chunk) => String(chunk).includes('ready') && done())
);

const sql = await mysql.createConnection({ uri: db.url, timezone: 'Z' });
try {
	await waitForHttp(`http://127.0.0.1:${appPort}/api/health`, 60, app);
	await baselineReady;

	// Open boxes with no training gate, bookable a year ahead.
	const makeBox = async (name) => {
		const [r] = await sql.query(
			'INSERT INTO boxes (name, room, gas, volume_l, horizon_days) VALUES (?, ?, ?, ?, 365)',
			[name, 'Bench', 'Ar', 1000]
		);
		return r.insertId;
	};
	const boxes = async (label) => {
		const ids = [];
		for (let n = 0; n < boxCount; n++) ids.push(await makeBox(`Bench ${label} ${n}`));
		return ids;
	};
	const appBoxes = await boxes('app');
	const baseBoxes = await boxes('baseline');
	const appTaken = await makeBox('Bench app, taken');
	const baseTaken = await makeBox('Bench baseline, taken');
	const [[member]] = await sql.query("SELECT id FROM users WHERE email = 'member@example.org'");

	// Twenty people, signed in, each held to the boxes' default weekly quota.
	const people = [];
	for (let n = 0; n < 20; n++) {
		const email = `bench${n}@example.org`;
		const [r] = await sql.query(
			"INSERT INTO users (email, name, password_hash, role, status) SELECT ?, ?, password_hash, 'member', 'active' FROM users WHERE email = 'member@example.org'",
			[email, `Bench ${n}`]
		);
		const signIn = await fetch(`http://127.0.0.1:${appPort}/api/session`, {
			method: 'POST',
			headers: { 'content-type': 'application/json' },
			body: JSON.stringify({ email, password: 'demo-pass-2026' })
		});
		people.push({ id: r.insertId, cookie: signIn.headers.getSetCookie()[0].split(';')[0] });
	}
	const cookie = people[0].cookie;

	const startAt = new Date();
	startAt.setUTCHours(24, 0, 0, 0);
	const halfHour = (n) => {
		const start = new Date(startAt.getTime() + n * 30 * 60_000);
		return { start, end: new Date(start.getTime() + 30 * 60_000) };
	};
	/** Request n: box n mod B, that box's next half hour, the next person in turn. */
	const freeSlots = (boxIds) => {
		let n = 0;
		return (req) => {
			const box = n % boxIds.length;
			const step = Math.floor(n++ / boxIds.length);
			const person = people[step % people.length];
			const { start, end } = halfHour(step);
			req.headers = { ...req.headers, cookie: person.cookie };
			req.body = JSON.stringify({
				boxId: boxIds[box],
				userId: person.id,
				start: start.toISOString(),
				end: end.toISOString(),
				purpose: 'bench'
			});
			return req;
		};
	};
	// One half hour two days on, held on each "taken" box; everyone asks for it.
	const taken = halfHour(96);
	await sql.query(
		"INSERT INTO bookings (box_id, user_id, start_at, end_at, blocked_until, purpose, status) VALUES (?, ?, ?, ?, ?, 'held', 'confirmed'), (?, ?, ?, ?, ?, 'held', 'confirmed')",
		[
			appTaken,
			member.id,
			taken.start,
			taken.end,
			taken.end,
			baseTaken,
			member.id,
			taken.start,
			taken.end,
			taken.end
		]
	);
	const takenSlot = (boxId) => {
		let n = 0;
		return (req) => {
			const person = people[n++ % people.length];
			req.headers = { ...req.headers, cookie: person.cookie };
			req.body = JSON.stringify({
				boxId,
				userId: person.id,
				start: taken.start.toISOString(),
				end: taken.end.toISOString(),
				purpose: 'bench'
			});
			return req;
		};
	};

	const headers = { 'content-type': 'application/json' };
	const app_ = `http://127.0.0.1:${appPort}`;
	const base = `http://127.0.0.1:${basePort}`;
	const targets = [
		{ name: 'bare 409', url: base, path: '/', setup: takenSlot(baseTaken), expect: 409 },
		{ name: 'bare 201', url: base, path: '/', setup: freeSlots(baseBoxes), expect: 201 },
		{ name: 'floor', url: app_, path: '/api/bench/floor', setup: takenSlot(appTaken), expect: 409 },
		{ name: 'taken', url: app_, path: '/api/bookings', setup: takenSlot(appTaken), expect: 409 },
		{ name: 'free', url: app_, path: '/api/bookings', setup: freeSlots(appBoxes), expect: 201 }
	];
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
			runs.get(t.name).push(r);
			const answered = r.statusCodeStats?.[t.expect]?.count ?? 0;
			unexpected.set(t.name, unexpected.get(t.name) + r.requests.total - answered + r.errors);
		}
	}
	const median = (values) => {
		const sorted = [...values].sort((a, b) => a - b);
		return sorted[Math.floor(sorted.length / 2)];
	};
	const rate = (name) => median(runs.get(name).map((r) => r.requests.average));
	const p99 = (name) => median(runs.get(name).map((r) => r.latency.p99));
	const label = {
		'bare 409': 'bare node:http + mysql2, taken slot (409)',
		'bare 201': 'bare node:http + mysql2, free slots (201)',
		floor: 'SvelteKit + session check, 409 (no database)',
		taken: 'POST /api/bookings, taken slot (409)',
		free: 'POST /api/bookings, free slots (201)'
	};
	const versus = {
		'bare 409': 'bare 409',
		'bare 201': 'bare 201',
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
		`taken slot ${(rate('taken') / rate('bare 409')).toFixed(2)} of bare (aim ≥ 0.6, goal 0.8); free slots ${(rate('free') / rate('bare 201')).toFixed(2)} of bare (aim ≥ 0.4, goal 0.5)`
	);
	const [[{ made }]] = await sql.query(
		'SELECT COUNT(*) AS made FROM bookings WHERE box_id IN (?)',
		[appBoxes]
	);
	const [[{ doubled }]] = await sql.query(
		`SELECT COUNT(*) AS doubled FROM bookings a JOIN bookings b ON a.box_id = b.box_id AND a.id < b.id
		 AND a.start_at < b.blocked_until AND b.start_at < a.blocked_until
		 WHERE a.box_id IN (?) AND a.status IN ('pending', 'confirmed') AND b.status IN ('pending', 'confirmed')`,
		[[...appBoxes, appTaken]]
	);
	console.log(`bookings made by Boxwright: ${made}; overlapping pairs among them: ${doubled}`);
	const line = (name, r) =>
		`${name.padEnd(10)} ${r.requests.average.toFixed(0).padStart(6)} req/s   p50 ${String(r.latency.p50).padStart(4)} ms   p99 ${String(r.latency.p99).padStart(4)} ms   non-2xx ${r.non2xx}   errors ${r.errors}`;
	const appBox = appBoxes[0];
	const baseBox = baseBoxes[0];

	// Events for one week, with 1,000 and then 100,000 bookings in the table.
	const eventsBox = await makeBox('Bench events');
	await sql.query('DELETE FROM bookings WHERE box_id IN (?, ?)', [appBox, baseBox]);
	const fill = async (count, offsetDays) => {
		const rows = [];
		const boxes = [eventsBox, appBox, baseBox];
		for (let i = 0; i < count; i++) {
			// Spread over three boxes and about three years, two hours apart.
			const start = new Date(startAt.getTime() + offsetDays * 86_400_000 + i * 2 * 3_600_000);
			const end = new Date(start.getTime() + 3_600_000);
			rows.push([boxes[i % 3], member.id, start, end, end, 'bench', 'completed']);
		}
		for (let i = 0; i < rows.length; i += 5000) {
			await sql.query(
				'INSERT INTO bookings (box_id, user_id, start_at, end_at, blocked_until, purpose, status) VALUES ?',
				[rows.slice(i, i + 5000)]
			);
		}
	};
	const weekStart = new Date(startAt.getTime() + 10 * 86_400_000);
	const weekEnd = new Date(weekStart.getTime() + 7 * 86_400_000);
	const eventsUrl = `http://127.0.0.1:${appPort}/api/boxes/${eventsBox}/events?start=${encodeURIComponent(weekStart.toISOString())}&end=${encodeURIComponent(weekEnd.toISOString())}`;
	const eventsRun = () =>
		autocannon({
			url: eventsUrl,
			connections: 10,
			duration: Math.max(3, seconds / 2),
			headers: { cookie }
		});

	await fill(1000, 0);
	await sql.query('ANALYZE TABLE bookings');
	const small = await eventsRun();
	// The rest lands after the measured week, so that week's events stay the same.
	await fill(99_000, 100);
	await sql.query('ANALYZE TABLE bookings');
	const large = await eventsRun();
	const [[{ total }]] = await sql.query('SELECT COUNT(*) AS total FROM bookings');
	console.log(
		`\nEvents for one week (GET, 10 connections; ${total} bookings in the table at the end)`
	);
	console.log(line('1,000', small));
	console.log(line('100,000', large));
	console.log(
		`p50 latency ratio 100k/1k: ${(large.latency.p50 / Math.max(small.latency.p50, 0.5)).toFixed(2)}; throughput ratio 1k/100k: ${(small.requests.average / large.requests.average).toFixed(2)} (aim: at most 1.2)`
	);
} finally {
	await sql.end();
	app.kill('SIGTERM');
	baseline.kill('SIGTERM');
	await Promise.all(
		[app, baseline].map(
			(p) => new Promise((done) => (p.exitCode !== null ? done() : p.once('exit', done)))
		)
	);
	await db.stop();
}
