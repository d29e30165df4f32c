// `npm run bench:import`: a sensor log of 50,000 rows imported through Boxwright's endpoint
// (upload, parse, check every row, look up duplicates, insert in one transaction, settle the
// box's state) against a bare mysql2 multi-row INSERT of the same rows. Runs alternate
// between the two sides, each on a fresh box; medians and their ratio are printed, and the
// app's health endpoint is polled during each import to show whether the server stalls.
import { spawn } from 'node:child_process';
import mysql from 'mysql2/promise';
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

const ROWS = Number(process.env.BENCH_ROWS ?? 50_000);
const RUNS = Number(process.env.BENCH_RUNS ?? 5);
const BATCH = 5_000;
loadEnvFile();
ensureDependencies();
const db = await ensureDatabase({ database: 'boxwright_bench', fresh: true });
migrate(db.url);
seed(db.url);
ensureBuild();
const port = 3205;
const base = `http://127.0.0.1:${port}`;
const app = spawn('node', ['build'], {
	cwd: root,
	stdio: ['ignore', 'ignore', 'inherit'],
	env: {
		...process.env,
		DATABASE_URL: db.url,
		PORT: String(port),
		ORIGIN: base,
		BODY_SIZE_LIMIT: '26M',
		OUTBOX_WORKER: 'off',
		SCHEDULER: 'off'
	}
});
const sql = await mysql.createConnection({ uri: db.url, timezone: 'Z' });
const median = (xs) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];

// One minute apart, ending an hour ago; values in spec so the box's state stays put.
const end = Math.floor(Date.now() / 60_000) * 60_000 - 3_600_000;
const readings = Array.from({ length: ROWS }, (_, i) => ({
	at: new Date(end - (ROWS - 1 - i) * 60_000),
	o2: 0.3 + (i % 7) / 10,
	h2o: 0.2 + (i % 5) / 10
}));
const csv =
	'time,O2 ppm,H2O ppm\n' +
	readings.map((r) => `${r.at.toISOString()},${r.o2.toFixed(2)},${r.h2o.toFixed(2)}`).join('\n');

async function newBox(label) {
	const [box] = await sql.query(
		'INSERT INTO boxes (name, room, gas, volume_l) VALUES (?, ?, ?, ?)',
		[`${label} ${Math.random().toString(36).slice(2, 8)}`, 'Bench', 'Ar', 1000]
	);
	return box.insertId;
}

try {
	await waitForHttp(`${base}/api/health`, 60, app);
	const signIn = await fetch(`${base}/api/session`, {
		method: 'POST',
		headers: { 'content-type': 'application/json' },
		body: JSON.stringify({ email: 'manager@example.org', password: 'demo-pass-2026' })
	});
	const cookie = signIn.headers.getSetCookie()[0].split(';')[0];

	const viaApp = async () => {
		const boxId = await newBox('Import bench');
		// Health checks every 50 ms while the import runs: the longest answer is the stall.
		let importing = true;
		const lags = [];
		const poll = (async () => {
			while (importing) {
				const t = performance.now();
				await fetch(`${base}/api/health`);
				lags.push(performance.now() - t);
				await new Promise((r) => setTimeout(r, 50));
			}
		})();
		const t = performance.now();
		const r = await fetch(`${base}/api/boxes/${boxId}/readings/import`, {
			method: 'POST',
			headers: { cookie, 'content-type': 'text/csv' },
			body: csv
		});
		const body = await r.json();
		const ms = performance.now() - t;
		importing = false;
		await poll;
		if (r.status !== 201 || body.report.accepted !== ROWS)
			throw new Error(`import answered ${r.status}: ${JSON.stringify(body).slice(0, 300)}`);
		return { ms, worstHealthMs: Math.max(...lags), polls: lags.length };
	};

	const bare = async () => {
		const boxId = await newBox('Bare bench');
		const t = performance.now();
		await sql.beginTransaction();
		for (let i = 0; i < ROWS; i += BATCH) {
			const rows = readings.slice(i, i + BATCH).map((r) => [boxId, r.at, r.o2, r.h2o, 'csv']);
			await sql.query(
				'INSERT INTO atmosphere_readings (box_id, at, o2_ppm, h2o_ppm, source) VALUES ?',
				[rows]
			);
		}
		await sql.commit();
		return performance.now() - t;
	};

	await viaApp();
	await bare();
	const appMs = [];
	const bareMs = [];
	const stalls = [];
	for (let i = 0; i < RUNS; i++) {
		const a = await viaApp();
		appMs.push(a.ms);
		stalls.push(a.worstHealthMs);
		bareMs.push(await bare());
	}
	console.log(`\nImporting ${ROWS.toLocaleString('en')} readings (${RUNS} runs each, medians)`);
	console.log(
		`boxwright endpoint (HTTP upload, parse, checks, duplicates, insert): ${median(appMs).toFixed(0)} ms`
	);
	console.log(
		`bare mysql2 multi-row INSERT, ${BATCH} rows a statement, one transaction: ${median(bareMs).toFixed(0)} ms`
	);
	console.log(`ratio endpoint/bare: ${(median(appMs) / median(bareMs)).toFixed(2)}`);
	console.log(
		`slowest health check answered during an import: ${median(stalls).toFixed(0)} ms (median over runs of each run's worst)`
	);
} finally {
	await sql.end();
	app.kill('SIGTERM');
	await new Promise((done) => (app.exitCode !== null ? done() : app.once('exit', done)));
	await db.stop();
}
