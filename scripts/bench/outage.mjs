// `npm run bench:outage`: an outage over 1,000 bookings. Times the cascade (the POST that
// cancels them and queues 1,000 messages in one transaction) and the outbox draining into
// the local sink, beside the bare SQL UPDATE of the same number of rows on another box.
import { spawn } from 'node:child_process';
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import mysql from 'mysql2/promise';
import {
	dataDir,
	ensureBuild,
	ensureDatabase,
	ensureDependencies,
	loadEnvFile,
	log,
	migrate,
	root,
	seed,
	sleep,
	startMailSink,
	waitForHttp
} from '../lib/setup.mjs';

const COUNT = Number(process.env.BENCH_BOOKINGS ?? 1000);
loadEnvFile();
ensureDependencies();
const db = await ensureDatabase({ database: 'boxwright_bench', fresh: true });
migrate(db.url);
seed(db.url);
ensureBuild();
const sink = await startMailSink(2527, 'bench-mail');
const port = 3203;
const app = spawn('node', ['build'], {
	cwd: root,
	stdio: ['ignore', 'ignore', 'inherit'],
	env: {
		...process.env,
		...sink.env,
		DATABASE_URL: db.url,
		PORT: String(port),
		ORIGIN: `http://127.0.0.1:${port}`,
		OUTBOX_POLL_MS: '100'
	}
});
const sql = await mysql.createConnection({ uri: db.url, timezone: 'Z' });
try {
	await waitForHttp(`http://127.0.0.1:${port}/api/health`, 60, app);
	const makeBox = async (name) =>
		(
			await sql.query(
				"INSERT INTO boxes (name, room, gas, volume_l) VALUES (?, 'Bench', 'Ar', 1000)",
				[name]
			)
		)[0].insertId;
	const [[{ hash }]] = await sql.query(
		"SELECT password_hash AS hash FROM users WHERE email = 'member@example.org'"
	);
	const people = [];
	for (let n = 0; n < 50; n++) {
		const [r] = await sql.query(
			"INSERT INTO users (email, name, password_hash, role, status) VALUES (?, ?, ?, 'member', 'active')",
			[`outage-bench${n}@example.org`, `Bench ${n}`, hash]
		);
		people.push(r.insertId);
	}
	const start = new Date(Date.now() + 86_400_000);
	start.setUTCMinutes(0, 0, 0);
	const fill = async (boxId) => {
		const rows = [];
		for (let i = 0; i < COUNT; i++) {
			const s = new Date(start.getTime() + i * 30 * 60_000);
			const e = new Date(s.getTime() + 30 * 60_000);
			rows.push([boxId, people[i % people.length], s, e, e, 'bench', 'confirmed']);
		}
		await sql.query(
			'INSERT INTO bookings (box_id, user_id, start_at, end_at, blocked_until, purpose, status) VALUES ?',
			[rows]
		);
	};
	const end = new Date(start.getTime() + COUNT * 30 * 60_000);
	const appBox = await makeBox('Outage bench');
	const baseBox = await makeBox('Outage baseline');
	await fill(appBox);
	await fill(baseBox);

	// Baseline: the bare UPDATE of the same rows, in a transaction.
	const t0 = performance.now();
	await sql.beginTransaction();
	const [upd] = await sql.query(
		"UPDATE bookings SET status = 'cancelled', cancel_cause = 'outage', cancel_reason = 'bench', sequence = sequence + 1 WHERE box_id = ? AND status IN ('pending', 'confirmed') AND start_at < ? AND end_at > ?",
		[baseBox, end, start]
	);
	await sql.commit();
	const baseMs = performance.now() - t0;

	const signIn = await fetch(`http://127.0.0.1:${port}/api/session`, {
		method: 'POST',
		headers: { 'content-type': 'application/json' },
		body: JSON.stringify({ email: 'manager@example.org', password: 'demo-pass-2026' })
	});
	const cookie = signIn.headers.getSetCookie()[0].split(';')[0];
	const mailBefore = readdirSync(join(dataDir(), 'bench-mail')).length;
	const t1 = performance.now();
	const r = await fetch(`http://127.0.0.1:${port}/api/boxes/${appBox}/outages`, {
		method: 'POST',
		headers: { 'content-type': 'application/json', cookie },
		body: JSON.stringify({
			start: start.toISOString(),
			end: end.toISOString(),
			kind: 'regeneration',
			reason: 'Bench regeneration'
		})
	});
	const body = await r.json();
	const cascadeMs = performance.now() - t1;
	if (r.status !== 201) throw new Error(`outage refused: ${JSON.stringify(body)}`);

	let pending = COUNT;
	while (pending > 0) {
		const [[row]] = await sql.query(
			"SELECT COUNT(*) AS n FROM outbox WHERE kind = 'booking_cancelled' AND status <> 'sent'"
		);
		pending = Number(row.n);
		if (performance.now() - t1 > 600_000) throw new Error('the outbox did not drain in 10 minutes');
		if (pending > 0) await sleep(50);
	}
	const drainMs = performance.now() - t1;
	const delivered = readdirSync(join(dataDir(), 'bench-mail')).length - mailBefore;

	console.log(`\nOutage over ${COUNT} bookings`);
	console.log(`bare UPDATE of ${upd.affectedRows} rows:       ${baseMs.toFixed(0).padStart(6)} ms`);
	console.log(
		`boxwright cascade (${body.cancelledBookingIds.length} cancelled, messages queued): ${cascadeMs.toFixed(0).padStart(6)} ms`
	);
	console.log(
		`until every message was in the sink:  ${drainMs.toFixed(0).padStart(6)} ms (${delivered} files)`
	);
	console.log(
		`ratio cascade/bare update: ${(cascadeMs / baseMs).toFixed(1)}; ratio drained/bare update: ${(drainMs / baseMs).toFixed(1)}`
	);
	log('done');
} finally {
	await sql.end();
	app.kill('SIGTERM');
	await new Promise((done) => (app.exitCode !== null ? done() : app.once('exit', done)));
	await sink.stop();
	await db.stop();
}
