// Helpers of the cluster tests: a client bound to one app process, load loops that count
// what they get, and reads on each Galera node directly.
import mysql from 'mysql2/promise';
import { inject } from 'vitest';
import { appPassword, nodes } from '../../scripts/lib/cluster.mjs';

export const cluster = inject('cluster');

export type Answer = { status: number; ms: number; body: unknown; at: number };

/**
 * A signed-in person talking to one app process (or the balancer). Sign-in goes through the
 * balancer, which adds X-Forwarded-For (the processes trust it: ADDRESS_HEADER); requests
 * sent straight to a process carry the same header, as HAProxy would.
 */
export class ProcessClient {
	constructor(
		readonly base: string,
		readonly cookie: string
	) {}

	/** The same session on another process. */
	on(base: string) {
		return new ProcessClient(base, this.cookie);
	}

	/** Status 0: no answer (connection refused or reset, or no answer within 60 s). */
	async request(method: string, path: string, body?: unknown): Promise<Answer> {
		const started = performance.now();
		const headers: Record<string, string> = {
			cookie: this.cookie,
			'x-forwarded-for': '127.0.0.1'
		};
		if (body !== undefined) headers['content-type'] = 'application/json';
		try {
			const response = await fetch(this.base + path, {
				method,
				headers,
				body: body === undefined ? undefined : JSON.stringify(body),
				signal: AbortSignal.timeout(60_000)
			});
			const text = await response.text();
			let parsed: unknown = text;
			try {
				parsed = JSON.parse(text);
			} catch {
				// not JSON (a feed)
			}
			return {
				status: response.status,
				ms: performance.now() - started,
				body: parsed,
				at: Date.now()
			};
		} catch (e) {
			return {
				status: 0,
				ms: performance.now() - started,
				body: (e as Error).message,
				at: Date.now()
			};
		}
	}

	get(path: string) {
		return this.request('GET', path);
	}
	post(path: string, body?: unknown) {
		return this.request('POST', path, body);
	}
	delete(path: string) {
		return this.request('DELETE', path);
	}
}

/** Signs in through the balancer; the session cookie works on every process. */
export async function signIn(email: string, password: string, base = cluster.balancerUrl) {
	const response = await fetch(`${base}/api/session`, {
		method: 'POST',
		headers: { 'content-type': 'application/json' },
		body: JSON.stringify({ email, password })
	});
	if (response.status !== 200) {
		throw new Error(`sign-in as ${email} gave ${response.status}: ${await response.text()}`);
	}
	const cookie = response.headers
		.getSetCookie()
		.map((line) => line.split(';')[0])
		.join('; ');
	return new ProcessClient(base, cookie);
}

/** What a stretch of load got: statuses counted, 5xx and no-answers listed, the slowest. */
export class Tally {
	readonly counts = new Map<number, number>();
	readonly failures: { status: number; what: string; body: unknown; at: number }[] = [];
	slowestMs = 0;
	/** When the slowest request was sent (ms since the epoch). */
	slowestSentAt = 0;

	add(what: string, answer: Answer) {
		this.counts.set(answer.status, (this.counts.get(answer.status) ?? 0) + 1);
		if (answer.ms > this.slowestMs) {
			this.slowestMs = answer.ms;
			this.slowestSentAt = answer.at - answer.ms;
		}
		if (answer.status === 0 || answer.status >= 500) {
			this.failures.push({ status: answer.status, what, body: answer.body, at: answer.at });
		}
	}

	get total() {
		return [...this.counts.values()].reduce((a, b) => a + b, 0);
	}

	count(status: number) {
		return this.counts.get(status) ?? 0;
	}

	summary() {
		const parts = [...this.counts].sort(([a], [b]) => a - b).map(([s, n]) => `${s}×${n}`);
		return `${this.total} requests (${parts.join(', ')}), slowest ${Math.round(this.slowestMs)} ms`;
	}
}

/** A wall-clock hour `days` ahead at `hour` UTC plus `minutes` steps: ISO strings. */
export function utcSlot(days: number, startMinutes: number, lengthMinutes: number) {
	const day = new Date();
	day.setUTCHours(0, 0, 0, 0);
	const start = new Date(day.getTime() + days * 86_400_000 + startMinutes * 60_000);
	const end = new Date(start.getTime() + lengthMinutes * 60_000);
	return { start: start.toISOString(), end: end.toISOString() };
}

/**
 * A connection straight to one node (not through the balancer), reading with
 * wsrep_sync_wait=1 so it sees every write the cluster has committed.
 */
export async function onNode<T>(
	index: number,
	work: (conn: mysql.Connection) => Promise<T>
): Promise<T> {
	const conn = await mysql.createConnection({
		host: '127.0.0.1',
		port: nodes[index].port,
		user: 'boxwright',
		password: appPassword(),
		database: cluster.database,
		timezone: 'Z'
	});
	try {
		await conn.query('SET SESSION wsrep_sync_wait = 1');
		return await work(conn);
	} finally {
		await conn.end();
	}
}

/** Open bookings (pending, confirmed) of these boxes whose holds overlap: must be none. */
export async function doubleHolds(index: number, boxIds: number[]) {
	if (!boxIds.length) return 0;
	return onNode(index, async (conn) => {
		const [rows] = await conn.query(
			`SELECT COUNT(*) AS n FROM bookings a JOIN bookings b
				ON a.box_id = b.box_id AND a.id < b.id
				AND a.start_at < b.blocked_until AND b.start_at < a.blocked_until
			WHERE a.box_id IN (?) AND a.status IN ('pending', 'confirmed')
				AND b.status IN ('pending', 'confirmed')`,
			[boxIds]
		);
		return Number((rows as { n: number }[])[0].n);
	});
}

/** Each booking's id and status as one node has them, sorted by id. */
export async function bookingsOnNode(index: number, ids: number[]) {
	if (!ids.length) return [];
	return onNode(index, async (conn) => {
		const [rows] = await conn.query('SELECT id, status FROM bookings WHERE id IN (?) ORDER BY id', [
			ids
		]);
		return (rows as { id: number; status: string }[]).map((r) => `${r.id}:${r.status}`);
	});
}

/** Asks `/api/health` of each url until every one answers 200; resolves with the ms it took. */
export async function healthyWithin(urls: string[], seconds: number) {
	const started = Date.now();
	const deadline = started + seconds * 1000;
	const pending = new Set(urls);
	while (pending.size) {
		if (Date.now() > deadline) {
			throw new Error(`no healthy answer within ${seconds} s from ${[...pending].join(', ')}`);
		}
		await Promise.all(
			[...pending].map(async (url) => {
				try {
					const r = await fetch(`${url}/api/health`, {
						signal: AbortSignal.timeout(Math.max(200, deadline - Date.now()))
					});
					if (r.status === 200) pending.delete(url);
				} catch {
					// no answer yet
				}
			})
		);
		if (pending.size) await new Promise((r) => setTimeout(r, 100));
	}
	return Date.now() - started;
}

/** Runs `loop` in `workers` parallel copies until `stop()` resolves true. */
export async function loadUntil(
	workers: number,
	loop: (worker: number) => Promise<void>,
	running: () => boolean
) {
	await Promise.all(
		Array.from({ length: workers }, async (_, w) => {
			while (running()) await loop(w);
		})
	);
}
