// `npm run bench:booking`: the booking decision against a bare node:http + mysql2 endpoint
// (baseline-booking.mjs), five targets in alternating rounds (lib/decisions.mjs says which),
// BENCH_ROUNDS rounds of BENCH_SECONDS each, medians, autocannon at BENCH_CONNECTIONS, free
// slots over BENCH_BOXES boxes; then the events endpoint for one week with 1,000 and with
// 100,000 bookings in the table. Ratios are printed; everything runs on one database.
import autocannon from 'autocannon';
import { spawn } from 'node:child_process';
import mysql from 'mysql2/promise';
import { measureDecisions } from './lib/decisions.mjs';
import {
	ensureBuild,
	ensureDatabase,
	ensureDependencies,
	loadEnvFile,
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

	const { appBoxes, baseBoxes, cookie } = await measureDecisions({
		sql,
		appUrl: `http://127.0.0.1:${appPort}`,
		bareUrl: `http://127.0.0.1:${basePort}`,
		rounds,
		seconds,
		connections,
		boxCount
	});
	const [[member]] = await sql.query("SELECT id FROM users WHERE email = 'member@example.org'");
	const line = (name, r) =>
		`${name.padEnd(10)} ${r.requests.average.toFixed(0).padStart(6)} req/s   p50 ${String(r.latency.p50).padStart(4)} ms   p99 ${String(r.latency.p99).padStart(4)} ms   non-2xx ${r.non2xx}   errors ${r.errors}`;
	const appBox = appBoxes[0];
	const baseBox = baseBoxes[0];

	// Events for one week, with 1,000 and then 100,000 bookings in the table.
	const [made] = await sql.query(
		'INSERT INTO boxes (name, room, gas, volume_l, horizon_days) VALUES (?, ?, ?, ?, 365)',
		['Bench events', 'Bench', 'Ar', 1000]
	);
	const eventsBox = made.insertId;
	const startAt = new Date();
	startAt.setUTCHours(24, 0, 0, 0);
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
