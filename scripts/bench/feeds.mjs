// `npm run bench:feeds`: a feed of 2,000 events from Boxwright's endpoint against
// ical-generator building the same events in this process with no database. Both are
// timed over the same number of runs after a warm-up; the ratio is printed (aim ≤ 1.5).
import { spawn } from 'node:child_process';
import ical, { ICalEventStatus } from 'ical-generator';
import { DateTime } from 'luxon';
import mysql from 'mysql2/promise';
import { tzlib_get_ical_block } from 'timezones-ical-library';
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

const COUNT = 2000;
const RUNS = Number(process.env.BENCH_RUNS ?? 30);
const tz = 'Europe/Berlin';
loadEnvFile();
ensureDependencies();
const db = await ensureDatabase({ database: 'boxwright_bench', fresh: true });
migrate(db.url);
seed(db.url);
ensureBuild();
const port = 3204;
const app = spawn('node', ['build'], {
	cwd: root,
	stdio: ['ignore', 'ignore', 'inherit'],
	env: {
		...process.env,
		DATABASE_URL: db.url,
		PORT: String(port),
		ORIGIN: `http://127.0.0.1:${port}`,
		FACILITY_TZ: tz,
		OUTBOX_WORKER: 'off',
		FEED_LIMIT_TOKEN: '100000',
		FEED_LIMIT_ADDRESS: '100000'
	}
});
const sql = await mysql.createConnection({ uri: db.url, timezone: 'Z' });

const median = (xs) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];

try {
	await waitForHttp(`http://127.0.0.1:${port}/api/health`, 60, app);
	const [[member]] = await sql.query("SELECT id FROM users WHERE email = 'member@example.org'");
	const [box] = await sql.query(
		"INSERT INTO boxes (name, room, gas, volume_l) VALUES ('Feed bench', 'Bench', 'Ar', 1000)"
	);
	await sql.query('DELETE FROM bookings WHERE user_id = ?', [member.id]);
	const first = Date.now() - 29 * 86_400_000;
	const rows = [];
	for (let i = 0; i < COUNT; i++) {
		const s = new Date(Math.floor((first + i * 4 * 3_600_000) / 900_000) * 900_000);
		const e = new Date(s.getTime() + 3_600_000);
		rows.push([
			box.insertId,
			member.id,
			s,
			e,
			e,
			`Bench booking ${i}`,
			i % 10 === 0 ? 'cancelled' : 'confirmed',
			i % 10 === 0 ? 1 : 0
		]);
	}
	await sql.query(
		'INSERT INTO bookings (box_id, user_id, start_at, end_at, blocked_until, purpose, status, sequence) VALUES ?',
		[rows]
	);

	const signIn = await fetch(`http://127.0.0.1:${port}/api/session`, {
		method: 'POST',
		headers: { 'content-type': 'application/json' },
		body: JSON.stringify({ email: 'member@example.org', password: 'demo-pass-2026' })
	});
	const cookie = signIn.headers.getSetCookie()[0].split(';')[0];
	const { userFeedUrl } = await (
		await fetch(`http://127.0.0.1:${port}/api/me/feed-token`, {
			method: 'POST',
			headers: { cookie }
		})
	).json();
	const url = `http://127.0.0.1:${port}${new URL(userFeedUrl).pathname}`;

	// The same events, built in-process: what the endpoint does minus HTTP and the database.
	const events = rows.map((r, i) => ({
		id: i,
		start: r[2],
		end: r[3],
		purpose: r[5],
		cancelled: r[6] === 'cancelled',
		sequence: r[7]
	}));
	const build = () => {
		const calendar = ical({
			name: 'Boxwright: my box time',
			prodId: { company: 'Boxwright', product: 'Boxwright', language: 'EN' },
			ttl: 900
		});
		calendar.timezone({ name: tz, generator: (zone) => tzlib_get_ical_block(zone)[0] });
		const stamp = new Date();
		for (const e of events) {
			calendar.createEvent({
				id: `booking-${e.id}@boxwright`,
				sequence: e.sequence,
				start: DateTime.fromJSDate(e.start).setZone(tz),
				end: DateTime.fromJSDate(e.end).setZone(tz),
				timezone: tz,
				stamp,
				lastModified: stamp,
				summary: `Feed bench: ${e.purpose}`,
				location: 'Feed bench, room Bench',
				description: e.cancelled ? 'Cancelled: bench' : null,
				status: e.cancelled ? ICalEventStatus.CANCELLED : ICalEventStatus.CONFIRMED
			});
		}
		return calendar.toString();
	};

	const timeEndpoint = async () => {
		const t = performance.now();
		const r = await fetch(url);
		const text = await r.text();
		if (r.status !== 200) throw new Error(`feed answered ${r.status}`);
		return { ms: performance.now() - t, events: (text.match(/BEGIN:VEVENT/g) ?? []).length };
	};
	const timeBuild = () => {
		const t = performance.now();
		build();
		return performance.now() - t;
	};
	for (let i = 0; i < 5; i++) {
		await timeEndpoint();
		timeBuild();
	}
	const endpoint = [];
	const baseline = [];
	let served = 0;
	// Interleaved, so machine noise falls on both sides alike.
	for (let i = 0; i < RUNS; i++) {
		const e = await timeEndpoint();
		endpoint.push(e.ms);
		served = e.events;
		baseline.push(timeBuild());
	}
	console.log(`\nFeed of ${served} events (${RUNS} runs each, medians)`);
	console.log(
		`boxwright endpoint (HTTP, session-free token, database): ${median(endpoint).toFixed(1)} ms`
	);
	console.log(
		`ical-generator in-process, same events, no database:    ${median(baseline).toFixed(1)} ms`
	);
	console.log(
		`ratio endpoint/in-process: ${(median(endpoint) / median(baseline)).toFixed(2)} (aim: at most 1.5)`
	);
	// What a subscribed client costs on most polls: a conditional request answered 304.
	const etag = (await fetch(url)).headers.get('etag');
	const conditional = [];
	for (let i = 0; i < RUNS; i++) {
		const t = performance.now();
		const r = await fetch(url, { headers: { 'if-none-match': etag } });
		await r.arrayBuffer();
		if (r.status !== 304) throw new Error(`expected 304, got ${r.status}`);
		conditional.push(performance.now() - t);
	}
	console.log(`a repeated poll answered 304 (no rendering): ${median(conditional).toFixed(1)} ms`);
} finally {
	await sql.end();
	app.kill('SIGTERM');
	await new Promise((done) => (app.exitCode !== null ? done() : app.once('exit', done)));
	await db.stop();
}
