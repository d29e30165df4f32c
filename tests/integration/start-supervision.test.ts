// `npm start` keeps its server (scripts/start.mjs, scripts/lib/supervise.mjs): a server
// killed with SIGKILL, as kill -9 or the OOM killer do it, is started again within seconds;
// SIGTERM to the script stops the server, the mail sink and the MariaDB it started, and it
// exits; a server that keeps dying makes it stop everything and exit 1. Before supervision
// the script sent SIGTERM to the dead server, waited for an exit that had already fired,
// and hung with the sink and the database still running.
//
// The real script runs on its own ports and data folder (its own MariaDB when mariadbd is
// installed, else the test database, with the outbox worker and the scheduler off), and
// serves the build `npm test` made (SKIP_BUILD=1: it must not rebuild under the test app).
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { mkdtemp, rm } from 'node:fs/promises';
import { createConnection, createServer, type Server } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import {
	afterExit,
	freshRestartState,
	restartPolicy,
	supervise,
	waitForExit
} from '../../scripts/lib/supervise.mjs';

const root = fileURLToPath(new URL('../..', import.meta.url));

describe('restart policy', () => {
	const policy = restartPolicy;

	it('pauses 1, 2, 4 and 8 s after quick deaths and gives up at the fifth within 2 minutes', () => {
		let state = freshRestartState;
		let now = 0;
		const pauses: number[] = [];
		for (let i = 0; i < 4; i++) {
			const d = afterExit(state, { now, uptimeMs: 500 }, policy);
			expect(d.giveUp).toBe(false);
			pauses.push(d.delayMs);
			state = d.state;
			now += d.delayMs + 500;
		}
		expect(pauses).toEqual([1_000, 2_000, 4_000, 8_000]);
		expect(afterExit(state, { now, uptimeMs: 500 }, policy).giveUp).toBe(true);
	});

	it('caps the pause at 30 s, and starts from 1 s again after a run of a minute', () => {
		const many = { ...policy, maxExits: 100 };
		let state = freshRestartState;
		let delay = 0;
		for (let i = 0; i < 8; i++) {
			const d = afterExit(state, { now: i * 1000, uptimeMs: 100 }, many);
			state = d.state;
			delay = d.delayMs;
		}
		expect(delay).toBe(30_000);
		expect(afterExit(state, { now: 200_000, uptimeMs: 60_000 }, many).delayMs).toBe(1_000);
	});

	it('forgets deaths older than 2 minutes', () => {
		const state = { streak: 1, exits: [0, 10_000, 20_000, 30_000] };
		expect(afterExit(state, { now: 40_000, uptimeMs: 100 }, policy).giveUp).toBe(true);
		const later = afterExit(state, { now: 125_000, uptimeMs: 100 }, policy);
		expect(later.giveUp).toBe(false);
		expect(later.state.exits).toEqual([10_000, 20_000, 30_000, 125_000]);
	});
});

/** Polls until `check` holds; a deadline, not a sleep, decides when to give up. */
async function waitFor(check: () => boolean | Promise<boolean>, seconds: number, what: string) {
	const deadline = Date.now() + seconds * 1000;
	while (Date.now() < deadline) {
		if (await check()) return;
		await new Promise((r) => setTimeout(r, 100));
	}
	throw new Error(`${what}: not within ${seconds} s`);
}

describe('supervise, with a stand-in server', () => {
	const quick = { ...restartPolicy, firstDelayMs: 200 };
	const idle = () => spawn(process.execPath, ['-e', 'setInterval(() => {}, 1000)']);

	it('starts a killed process again, and a stop during the pause signals nobody', async () => {
		const started: ChildProcess[] = [];
		const log = vi.fn();
		const s = supervise({
			start() {
				const child = idle();
				vi.spyOn(child, 'kill');
				started.push(child);
				return child;
			},
			onGiveUp: () => {},
			log,
			policy: quick
		});
		await waitFor(() => started[0]?.pid !== undefined, 5, 'first start');
		process.kill(started[0].pid!, 'SIGKILL');
		await waitFor(() => started.length === 2, 5, 'restart after SIGKILL');
		expect(log).toHaveBeenCalledWith(expect.stringMatching(/killed by SIGKILL; starting it again/));

		process.kill(started[1].pid!, 'SIGKILL');
		await waitForExit(started[1], 5_000);
		const t = Date.now();
		await s.stop();
		expect(Date.now() - t).toBeLessThan(1_000);
		for (const child of started) expect(child.kill).not.toHaveBeenCalled();
		// The pending restart was cancelled.
		await new Promise((r) => setTimeout(r, quick.firstDelayMs * 3));
		expect(started).toHaveLength(2);
	});

	it('gives up after 5 quick deaths and starts nothing more', async () => {
		let starts = 0;
		const reason = await new Promise<string>((resolve) =>
			supervise({
				start() {
					starts++;
					return spawn(process.execPath, ['-e', 'process.exit(3)']);
				},
				onGiveUp: resolve,
				log: () => {},
				policy: { ...restartPolicy, firstDelayMs: 20 }
			})
		);
		expect(reason).toMatch(/exited with 3, 5 exits within 2 min/);
		expect(starts).toBe(5);
	});

	it('kills a process that ignores SIGTERM once the grace time is over', async () => {
		let child: ChildProcess | undefined;
		const s = supervise({
			start: () =>
				(child = spawn(process.execPath, [
					'-e',
					'process.on("SIGTERM", () => {}); console.log("ready"); setInterval(() => {}, 1000)'
				])),
			onGiveUp: () => {},
			log: () => {},
			graceMs: 300
		});
		await new Promise((r) => child!.stdout!.once('data', r));
		await s.stop();
		expect(child!.signalCode).toBe('SIGKILL');
	});
});

// ---- the real script ----

function findCommand(name: string) {
	const dirs = [...(process.env.PATH ?? '').split(':'), '/usr/sbin', '/usr/bin', '/sbin'];
	return dirs.some((dir) => dir && existsSync(join(dir, name)));
}
/** Its own MariaDB when it can start one; otherwise the test database (see the top). */
const ownDatabase = findCommand('mariadbd') && findCommand('mariadb-install-db');

/** Three ports free on loopback right now. */
async function freePorts(n: number): Promise<number[]> {
	const servers: Server[] = [];
	const ports: number[] = [];
	for (let i = 0; i < n; i++) {
		const server = createServer();
		await new Promise<void>((done) => server.listen(0, '127.0.0.1', done));
		servers.push(server);
		ports.push((server.address() as { port: number }).port);
	}
	await Promise.all(servers.map((s) => new Promise((done) => s.close(done))));
	return ports;
}

/** Whether a process runs (a zombie does not). */
function alive(pid: number) {
	try {
		process.kill(pid, 0);
	} catch {
		return false;
	}
	try {
		return readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1]?.[0] !== 'Z';
	} catch {
		return false;
	}
}

/** Whether something accepts connections on the port. */
function listening(port: number) {
	return new Promise<boolean>((done) => {
		const socket = createConnection({ host: '127.0.0.1', port });
		socket.once('connect', () => {
			socket.destroy();
			done(true);
		});
		socket.once('error', () => done(false));
	});
}

async function healthy(url: string) {
	try {
		const response = await fetch(`${url}/api/health`, { signal: AbortSignal.timeout(2_000) });
		return response.ok;
	} catch {
		return false;
	}
}

describe('npm start (scripts/start.mjs)', () => {
	let dir: string;
	let appPort: number;
	let smtpPort: number;
	let url: string;
	let env: Record<string, string | undefined>;
	beforeAll(async () => {
		dir = await mkdtemp(join(tmpdir(), 'boxwright-start-'));
		let dbPort: number;
		[appPort, dbPort, smtpPort] = await freePorts(3);
		url = `http://127.0.0.1:${appPort}`;
		env = {
			...process.env,
			BOXWRIGHT_DATA_DIR: dir,
			PORT: String(appPort),
			ORIGIN: url,
			DB_PORT: String(dbPort),
			DB_NAME: 'boxwright',
			SMTP_PORT: String(smtpPort),
			// Blank counts as unset, and keeps a .env file from filling it in.
			SMTP_URL: '',
			DATABASE_URL: ownDatabase ? '' : process.env.DATABASE_URL,
			SKIP_BUILD: '1',
			OUTBOX_WORKER: 'off',
			SCHEDULER: 'off'
		};
	});
	const runs: { child: ChildProcess; output: () => string }[] = [];

	/** Starts the script in a process group of its own, so a failed test can end it all. */
	function launch(extra: Record<string, string> = {}) {
		const child = spawn(process.execPath, ['scripts/start.mjs'], {
			cwd: root,
			env: { ...env, ...extra },
			stdio: ['ignore', 'pipe', 'pipe'],
			detached: true
		});
		let text = '';
		child.stdout!.on('data', (c) => (text += c));
		child.stderr!.on('data', (c) => (text += c));
		const run = { child, output: () => text };
		runs.push(run);
		return run;
	}
	const serverPids = (output: string) =>
		[...output.matchAll(/server started \(pid (\d+)\)/g)].map((m) => Number(m[1]));
	/** The MariaDB the script started (its pid file goes when it stops), or null. */
	const databasePids: number[] = [];
	const databasePid = () => {
		const file = join(dir, 'mariadb.pid');
		if (!ownDatabase || !existsSync(file)) return null;
		const pid = Number(readFileSync(file, 'utf8').trim());
		databasePids.push(pid);
		return pid;
	};

	afterAll(async () => {
		for (const { child } of runs) {
			if (child.exitCode === null && child.signalCode === null && child.pid) {
				process.kill(-child.pid, 'SIGKILL');
				await waitForExit(child, 5_000);
			}
		}
		for (const pid of databasePids) if (alive(pid)) process.kill(pid, 'SIGKILL');
		if (dir) await rm(dir, { recursive: true, force: true });
	});

	it('starts a server killed with SIGKILL again, then stops everything on SIGTERM', async () => {
		const { child, output } = launch();
		const say = () => `\n--- start.mjs said:\n${output()}`;
		await waitFor(
			async () => {
				if (child.exitCode !== null) throw new Error(`start.mjs exited early${say()}`);
				return healthy(url);
			},
			60,
			`the app answering on ${url}${say()}`
		);
		const [first] = serverPids(output());
		expect(first, say()).toBeGreaterThan(0);
		const database = databasePid();
		if (ownDatabase) expect(database && alive(database), say()).toBe(true);

		const killedAt = Date.now();
		process.kill(first, 'SIGKILL');
		await waitFor(
			async () => serverPids(output()).length >= 2 && (await healthy(url)),
			20,
			`a new server answering${say()}`
		);
		expect(Date.now() - killedAt).toBeLessThan(15_000);
		expect(output()).toMatch(/the server was killed by SIGKILL; starting it again in 1 s/);
		const second = serverPids(output()).at(-1)!;
		expect(second).not.toBe(first);

		child.kill('SIGTERM');
		expect(await waitForExit(child, 30_000), `start.mjs still running${say()}`).toBe(true);
		expect(child.exitCode, say()).toBe(0);
		expect(alive(second)).toBe(false);
		expect(await listening(smtpPort)).toBe(false);
		expect(await listening(appPort)).toBe(false);
		if (database) expect(alive(database), 'the MariaDB start.mjs started').toBe(false);
		expect(existsSync(join(dir, 'server.pid'))).toBe(false);
	}, 120_000);

	it('stops the sink and the database and exits 1 when the server keeps dying', async () => {
		// A setting the server refuses makes it exit at once, every time.
		const { child, output } = launch({ FACILITY_TZ: 'Not/A_Zone' });
		const say = () => `\n--- start.mjs said:\n${output()}`;
		// The database starts before the first server does.
		await waitFor(() => serverPids(output()).length > 0 || child.exitCode !== null, 60, say());
		const database = databasePid();
		expect(await waitForExit(child, 90_000), `start.mjs still running${say()}`).toBe(true);
		expect(child.exitCode, say()).toBe(1);
		expect(output()).toMatch(/5 exits within 2 min\); giving up/);
		const pids = serverPids(output());
		expect(pids).toHaveLength(5);
		for (const pid of pids) expect(alive(pid)).toBe(false);
		expect(await listening(smtpPort)).toBe(false);
		if (ownDatabase) expect(database, say()).not.toBeNull();
		if (database) expect(alive(database), 'the MariaDB start.mjs started').toBe(false);
	}, 120_000);
});
