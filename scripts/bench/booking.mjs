// `npm run bench:booking`: booking creation through the built app against a bare
// node:http + mysql2 endpoint doing the same locked insert, 20 concurrent clients each;
// then the events endpoint for one week with 1,000 and with 100,000 bookings in the table.
// Ratios are printed; both sides are measured in the same run on the same database.
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

const seconds = Number(process.env.BENCH_SECONDS ?? 8);
const connections = Number(process.env.BENCH_CONNECTIONS ?? 20);
const appPort = 3201;
const basePort = 3202;
const env = { ...process.env, DATABASE_URL: db.url, FACILITY_TZ: 'Europe/Berlin' };
// BENCH_PROFILE=1 writes a CPU profile of the app to .data/prof/ for a look at hot paths.
const profile = process.env.BENCH_PROFILE ? ['--cpu-prof', '--cpu-prof-dir=.data/prof'] : [];
const app = spawn('node', [...profile, 'build'], {
	cwd: root,
	stdio: ['ignore', 'ignore', 'inherit'],
	env: { ...env, PORT: String(appPort), ORIGIN: `http://127.0.0.1:${appPort}` }
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

	// Two open boxes with no training gate and room for thousands of bookings: one per side.
	const makeBox = async (name) => {
		const [r] = await sql.query(
			'INSERT INTO boxes (name, room, gas, volume_l, horizon_days) VALUES (?, ?, ?, ?, 365)',
			[name, 'Bench', 'Ar', 1000]
		);
		return r.insertId;
	};
	const appBox = await makeBox('Bench app');
	const baseBox = await makeBox('Bench baseline');
	const [[member]] = await sql.query("SELECT id FROM users WHERE email = 'member@example.org'");

	// Twenty people, one per connection, each held to the box's default weekly quota.
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

	// Every request asks for the next free half hour, starting tomorrow at 00:00 UTC.
	const startAt = new Date();
	startAt.setUTCHours(24, 0, 0, 0);
	const slotter = (boxId) => {
		let i = 0;
		return (req) => {
			const person = people[i % people.length];
			const start = new Date(startAt.getTime() + i++ * 30 * 60_000);
			const end = new Date(start.getTime() + 30 * 60_000);
			req.headers = { ...req.headers, cookie: person.cookie };
			req.body = JSON.stringify({
				boxId,
				userId: person.id,
				start: start.toISOString(),
				end: end.toISOString(),
				purpose: 'bench'
			});
			return req;
		};
	};
	const run = (url, options) => autocannon({ url, connections, duration: seconds, ...options });

	log(`booking creation, ${connections} connections, ${seconds} s each…`);
	const headers = { 'content-type': 'application/json' };
	const appResult = await run(`http://127.0.0.1:${appPort}`, {
		requests: [{ method: 'POST', path: '/api/bookings', headers, setupRequest: slotter(appBox) }]
	});
	const baseResult = await run(`http://127.0.0.1:${basePort}`, {
		requests: [
			{
				method: 'POST',
				path: '/',
				headers: { 'content-type': 'application/json' },
				setupRequest: slotter(baseBox)
			}
		]
	});

	const [[{ made }]] = await sql.query('SELECT COUNT(*) AS made FROM bookings WHERE box_id = ?', [
		appBox
	]);
	const line = (name, r) =>
		`${name.padEnd(10)} ${r.requests.average.toFixed(0).padStart(6)} req/s   p50 ${String(r.latency.p50).padStart(4)} ms   p99 ${String(r.latency.p99).padStart(4)} ms   non-2xx ${r.non2xx}   errors ${r.errors}`;
	console.log('\nBooking creation (POST, each request a new free slot)');
	console.log(line('boxwright', appResult));
	console.log(line('baseline', baseResult));
	console.log(`bookings saved by boxwright: ${made}`);
	const ratio = appResult.requests.average / baseResult.requests.average;
	console.log(`throughput ratio boxwright/baseline: ${ratio.toFixed(2)} (aim: at least 0.5)`);

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
