// `npm run bench:dashboard`: the dashboard page (`/`, rendered) through the built app, signed
// in as a member and as a manager, against a bare node:http + mysql2 endpoint reading the same
// rows in the same statements (scripts/bench/baseline-dashboard.mjs), 20 connections each
// (autocannon). Prints pages a second, p50/p99, the statements each side sends per page and
// the ratio app/baseline. Both sides run in the same process of this script, on the same
// database: the demo seed plus BENCH_BOXES more boxes (default 9), each with four gloved
// ports and a day of one-minute readings.
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
import { stopChild } from '../lib/supervise.mjs';

loadEnvFile();
ensureDependencies();
const db = await ensureDatabase({ database: 'boxwright_bench_dashboard', fresh: true });
migrate(db.url);
seed(db.url);
// SKIP_BUILD=1 serves build/ as it is (as `npm start` does); otherwise a stale build is redone.
if (process.env.SKIP_BUILD !== '1') ensureBuild();

const seconds = Number(process.env.BENCH_SECONDS ?? 8);
const connections = Number(process.env.BENCH_CONNECTIONS ?? 20);
const extraBoxes = Number(process.env.BENCH_BOXES ?? 9);
const appPort = 3206;
const basePort = 3207;
// The app counts its statements per request (X-Statements); the count is an
// AsyncLocalStorage lookup per statement, nothing beside a page's reads.
const env = {
	...process.env,
	DATABASE_URL: db.url,
	FACILITY_TZ: 'Europe/Berlin',
	COUNT_STATEMENTS: '1'
};
// BENCH_PROFILE=1 writes a CPU profile of the app to .data/prof/ for a look at hot paths.
const profile = process.env.BENCH_PROFILE ? ['--cpu-prof', '--cpu-prof-dir=.data/prof'] : [];
const app = spawn('node', [...profile, 'build'], {
	cwd: root,
	stdio: ['ignore', 'ignore', 'inherit'],
	env: { ...env, PORT: String(appPort), ORIGIN: `http://127.0.0.1:${appPort}` }
});
const baseline = spawn('node', ['scripts/bench/baseline-dashboard.mjs'], {
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

	// More boxes, as a facility has them: four gloved ports each and a day of readings.
	const [modules] = await sql.query('SELECT id FROM training_modules ORDER BY id LIMIT 1');
	const now = Date.now();
	for (let n = 0; n < extraBoxes; n++) {
		const [box] = await sql.query(
			'INSERT INTO boxes (name, room, gas, volume_l) VALUES (?, ?, ?, ?)',
			[`Bench box ${String(n + 1).padStart(2, '0')}`, `B${n}`, n % 2 ? 'N2' : 'Ar', 1000]
		);
		if (modules.length) {
			await sql.query('INSERT INTO box_required_modules (box_id, module_id) VALUES (?, ?)', [
				box.insertId,
				modules[0].id
			]);
		}
		for (const [i, position] of [
			'front-left',
			'front-right',
			'back-left',
			'back-right'
		].entries()) {
			const [port] = await sql.query(
				'INSERT INTO box_ports (box_id, position, diameter_mm, sort_order) VALUES (?, ?, 200, ?)',
				[box.insertId, position, i]
			);
			await sql.query(
				`INSERT INTO gloves (port_id, material, thickness_mm, size, hand, installed_at)
				VALUES (?, 'butyl', 0.4, '8', ?, ?)`,
				[
					port.insertId,
					position.endsWith('left') ? 'left' : 'right',
					new Date(now - 90 * 86_400_000)
				]
			);
		}
		const readings = Array.from({ length: 1440 }, (_, m) => [
			box.insertId,
			new Date(Math.floor(now / 60_000) * 60_000 - m * 60_000),
			(0.5 + (m % 7) / 10).toFixed(3),
			(0.3 + (m % 5) / 10).toFixed(3),
			'csv'
		]);
		await sql.query(
			'INSERT INTO atmosphere_readings (box_id, at, o2_ppm, h2o_ppm, source) VALUES ?',
			[readings]
		);
	}
	await sql.query('ANALYZE TABLE atmosphere_readings, boxes, box_ports, gloves, bookings');

	const signIn = async (email) => {
		const r = await fetch(`http://127.0.0.1:${appPort}/api/session`, {
			method: 'POST',
			headers: { 'content-type': 'application/json' },
			body: JSON.stringify({ email, password: 'demo-pass-2026' })
		});
		if (r.status !== 200) throw new Error(`sign-in as ${email}: ${r.status} ${await r.text()}`);
		return r.headers
			.getSetCookie()
			.map((c) => c.split(';')[0])
			.find((c) => c.startsWith('bw_session='));
	};
	const roles = [
		{ name: 'member', cookie: await signIn('member@example.org') },
		{ name: 'manager', cookie: await signIn('manager@example.org') }
	];

	/** One page, to check it answers and to read the statements it sent. */
	const probe = async (port, cookie) => {
		const r = await fetch(`http://127.0.0.1:${port}/`, { headers: { cookie } });
		await r.arrayBuffer();
		if (r.status !== 200) throw new Error(`GET / on :${port} answered ${r.status}`);
		return r.headers.get('x-statements') ?? '?';
	};
	const run = (port, cookie) =>
		autocannon({
			url: `http://127.0.0.1:${port}/`,
			connections,
			duration: seconds,
			headers: { cookie, accept: 'text/html' }
		});
	const line = (name, r, statements) =>
		`${name.padEnd(10)} ${r.requests.average.toFixed(0).padStart(6)} pages/s   p50 ${String(r.latency.p50).padStart(4)} ms   p99 ${String(r.latency.p99).padStart(4)} ms   ${String(statements).padStart(2)} statements/page   non-2xx ${r.non2xx}   errors ${r.errors}`;

	const [[{ boxCount }]] = await sql.query('SELECT COUNT(*) AS boxCount FROM boxes');
	for (const role of roles) {
		const appStatements = await probe(appPort, role.cookie);
		const baseStatements = await probe(basePort, role.cookie);
		log(`the dashboard as the ${role.name}, ${connections} connections, ${seconds} s each…`);
		const appResult = await run(appPort, role.cookie);
		const baseResult = await run(basePort, role.cookie);
		console.log(`\nDashboard as the demo ${role.name} (GET /, ${boxCount} boxes)`);
		console.log(line('boxwright', appResult, appStatements));
		console.log(line('baseline', baseResult, baseStatements));
		const ratio = appResult.requests.average / baseResult.requests.average;
		console.log(
			`pages a second, boxwright/baseline: ${ratio.toFixed(2)} (the baseline renders nothing: its answer is the rows as JSON)`
		);
	}
} finally {
	await sql.end();
	await Promise.all([
		stopChild(app, { name: 'app', log }),
		stopChild(baseline, { name: 'baseline', log })
	]);
	await db.stop();
}
