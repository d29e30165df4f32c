// `npm run bench:cluster`: booking decisions per second on the cluster of `npm run cluster`
// (scripts/lib/cluster.mjs), in one run on one fresh database, with autocannon at 20
// connections, each request a new free half hour on one of BENCH_BOXES boxes (4; one box
// is one lock, which serialises its bookings), fresh boxes for each measurement:
//
//   1. one app process writing on one node (node1's own port, no balancer at all);
//   2. two app processes through HAProxy (3140), both writing through the database
//      frontend with one writer (3330): the set-up `npm run cluster` serves;
//   3. two app processes each writing on a node of its own (node1 and node2 through their
//      frontends), 10 connections each on the same boxes: bookings on one box from both
//      nodes conflict at certification and run again, the hardest case for the cluster.
//   4. bench:booking's five targets in alternating rounds (lib/decisions.mjs), through the
//      balancer: the bare node:http + mysql2 endpoint on the database frontend, the floor,
//      a taken slot and free slots through HAProxy's app frontend.
//
// A decision is a 201 (booked) or a 409/422 (refused); anything else is counted apart.
import autocannon from 'autocannon';
import { spawn } from 'node:child_process';
import { openSync } from 'node:fs';
import { join } from 'node:path';
import mysql from 'mysql2/promise';
import { ensureBuild, ensureDependencies, loadEnvFile, log, root } from '../lib/setup.mjs';
import { measureDecisions, signedInPeople } from './lib/decisions.mjs';

loadEnvFile();
ensureDependencies();
if (process.env.SKIP_BUILD !== '1') ensureBuild();
const { appEnvironment, clusterDir, clusterStack, nodes, ports } =
	await import('../lib/cluster.mjs');

const seconds = Number(process.env.BENCH_SECONDS ?? 8);
/** Boxes each measurement books, in turn: one box is one lock, so it serialises its bookings. */
const boxCount = Number(process.env.BENCH_BOXES ?? 4);
const connections = Number(process.env.BENCH_CONNECTIONS ?? 20);
const database = 'boxwright_cluster_bench';
// Two more processes beside the cluster's own two: one on node1's port, one on node2's frontend.
const singlePort = ports.appProcesses[1] + 1;
const secondWriterPort = ports.appProcesses[1] + 2;

const stack = clusterStack({
	database,
	fresh: true,
	mailFolder: 'bench-mail',
	appOutput: 'log',
	seedEnv: {},
	appEnv: { LOG_LEVEL: 'warn', BENCH_FLOOR: '1' }
});

/** @type {import('node:child_process').ChildProcess[]} */
const extra = [];
/**
 * An app process of the bench's own on `port`, writing through `databasePort`.
 * @param {number} port
 * @param {number} databasePort
 */
function startProcess(port, databasePort) {
	const env = appEnvironment({
		database,
		port,
		databasePort,
		extra: {
			LOG_LEVEL: 'warn',
			SMTP_URL: `smtp://127.0.0.1:${ports.mailSink}`,
			MAIL_SINK_DIR: join(clusterDir(), 'bench-mail')
		}
	});
	const out = openSync(join(clusterDir(), `bench-${port}.log`), 'a');
	const child = spawn(process.execPath, ['build'], { cwd: root, env, stdio: ['ignore', out, out] });
	extra.push(child);
	return `http://127.0.0.1:${port}`;
}

/** @param {string} url */
async function waitHealthy(url) {
	const deadline = Date.now() + 90_000;
	while (Date.now() < deadline) {
		try {
			if ((await fetch(`${url}/api/health`)).ok) return;
		} catch {
			// not yet
		}
		await new Promise((r) => setTimeout(r, 200));
	}
	throw new Error(`${url} did not answer within 90 s`);
}

/** @typedef {{ id: number, cookie: string }} Person */

/**
 * Request i goes to box i mod n (a facility has several boxes) and asks for that box's next
 * half hour in its sequence (every `stride`-th one from `offset`), tomorrow on, as the next
 * person.
 * @param {number[]} boxIds
 * @param {Person[]} people
 * @param {number} [offset]
 * @param {number} [stride]
 */
function slotter(boxIds, people, offset = 0, stride = 1) {
	const first = new Date();
	first.setUTCHours(24, 0, 0, 0);
	let i = 0;
	return (/** @type {any} */ req) => {
		const person = people[i % people.length];
		const boxId = boxIds[i % boxIds.length];
		const step = offset + Math.floor(i++ / boxIds.length) * stride;
		const start = new Date(first.getTime() + step * 30 * 60_000);
		const end = new Date(start.getTime() + 30 * 60_000);
		req.headers = { ...req.headers, cookie: person.cookie, 'x-forwarded-for': '127.0.0.1' };
		req.body = JSON.stringify({
			boxId,
			start: start.toISOString(),
			end: end.toISOString(),
			purpose: 'bench'
		});
		return req;
	};
}

/**
 * @param {string} url
 * @param {number} conns
 * @param {(req: any) => any} setupRequest
 * @returns {Promise<any>}
 */
function hammer(url, conns, setupRequest) {
	return autocannon({
		url,
		connections: conns,
		duration: seconds,
		requests: [
			{
				method: 'POST',
				path: '/api/bookings',
				headers: { 'content-type': 'application/json' },
				setupRequest
			}
		]
	});
}

/** Decisions per second of one or more autocannon results that ran side by side. */
function summarise(/** @type {string} */ name, /** @type {any[]} */ results) {
	const sum = (/** @type {(r: any) => number} */ f) => results.reduce((a, r) => a + f(r), 0);
	const statuses = new Map();
	for (const r of results) {
		for (const [code, n] of Object.entries(r.statusCodeStats ?? {})) {
			statuses.set(code, (statuses.get(code) ?? 0) + /** @type {{ count: number }} */ (n).count);
		}
	}
	const decisions = ['201', '409', '422'].reduce((a, c) => a + (statuses.get(c) ?? 0), 0);
	const other = [...statuses].filter(([c]) => !['201', '409', '422'].includes(c));
	const perSecond = decisions / seconds;
	const p50 = Math.max(...results.map((r) => r.latency.p50));
	const p99 = Math.max(...results.map((r) => r.latency.p99));
	console.log(
		`${name.padEnd(44)} ${perSecond.toFixed(0).padStart(5)} decisions/s   p50 ${String(p50).padStart(4)} ms   p99 ${String(p99).padStart(5)} ms   ` +
			`201 × ${statuses.get('201') ?? 0}, other ${other.map(([c, n]) => `${c} × ${n}`).join(', ') || 'none'}, errors ${sum((r) => r.errors)}`
	);
	return perSecond;
}

let code = 0;
process.on('SIGINT', () => void finish(130));
/** @param {number} exitCode */
async function finish(exitCode) {
	for (const child of extra) child.kill('SIGTERM');
	await stack.stop();
	process.exit(exitCode);
}

try {
	await stack.start();
	const single = startProcess(singlePort, nodes[0].port);
	const second = startProcess(secondWriterPort, ports.dbSecondWriter);
	await Promise.all([single, second].map(waitHealthy));

	const sql = await mysql.createConnection({ uri: stack.databaseUrl(), timezone: 'Z' });
	/** `boxCount` open boxes named after the measurement. */
	const makeBoxes = async (/** @type {string} */ name) => {
		/** @type {number[]} */
		const ids = [];
		for (let n = 1; n <= boxCount; n++) {
			const [r] = /** @type {any} */ (
				await sql.query(
					'INSERT INTO boxes (name, room, gas, volume_l, horizon_days, weekly_quota_min) VALUES (?, ?, ?, ?, 365, 30000)',
					[`${name} ${n}`, 'Bench', 'Ar', 1000]
				)
			);
			ids.push(r.insertId);
		}
		return ids;
	};
	/** @type {Person[]} */
	const people = await signedInPeople(sql, stack.appUrl, connections, 'cluster-bench');

	log(`booking decisions, ${connections} connections, ${seconds} s each, ${boxCount} boxes…`);
	console.log('');
	const one = summarise('one process on node1 (no balancer)', [
		await hammer(single, connections, slotter(await makeBoxes('Cluster bench single'), people))
	]);
	const balanced = summarise('two processes via HAProxy, one writer node', [
		await hammer(
			stack.appUrl,
			connections,
			slotter(await makeBoxes('Cluster bench balanced'), people)
		)
	]);
	const sharedBoxes = await makeBoxes('Cluster bench two writers');
	await sql.end();
	const half = Math.max(1, Math.floor(connections / 2));
	const twoWriters = summarise(
		'two processes on two writer nodes, same boxes',
		await Promise.all([
			hammer(stack.appUrls[0], half, slotter(sharedBoxes, people.slice(0, half), 0, 2)),
			hammer(second, half, slotter(sharedBoxes, people.slice(half), 1, 2))
		])
	);
	console.log(
		`\nratio two processes via HAProxy / one process on one node: ${(balanced / one).toFixed(2)}` +
			`\nratio two writer nodes / one process on one node: ${(twoWriters / one).toFixed(2)}`
	);

	// 4. The same targets as bench:booking, through the balancer.
	const barePort = secondWriterPort + 1;
	const bare = spawn(process.execPath, ['scripts/bench/baseline-booking.mjs'], {
		cwd: root,
		env: { ...process.env, DATABASE_URL: stack.databaseUrl(), PORT: String(barePort) },
		stdio: ['ignore', 'pipe', 'inherit']
	});
	extra.push(bare);
	await new Promise((ready) =>
		bare.stdout?.on('data', (chunk) => String(chunk).includes('ready') && ready(undefined))
	);
	const through = await mysql.createConnection({ uri: stack.databaseUrl(), timezone: 'Z' });
	console.log('\nThrough the balancer (the bare endpoint on the database frontend):');
	await measureDecisions({
		sql: through,
		appUrl: stack.appUrl,
		bareUrl: `http://127.0.0.1:${barePort}`,
		rounds: Number(process.env.BENCH_ROUNDS ?? 5),
		seconds: Number(process.env.BENCH_ROUND_SECONDS ?? 4),
		connections,
		boxCount: 20,
		extraHeaders: { 'x-forwarded-for': '127.0.0.1' }
	});
	await through.end();
} catch (e) {
	console.error(`[boxwright] ${/** @type {Error} */ (e).message}`);
	code = 1;
}
await finish(code);
