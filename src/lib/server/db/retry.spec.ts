// The transaction runner against stand-in connections: which failures are run again, how
// often, with which pauses, and that every connection taken is given back (or destroyed)
// exactly once. The same runner on a real MariaDB: tests/integration/cluster-safety.test.ts.
import { describe, expect, it } from 'vitest';
import type { PoolConnection } from 'mysql2/promise';
import { sql } from 'drizzle-orm';
import { ServiceError } from '../errors';
import {
	backoffMs,
	driverError,
	isBroken,
	isLost,
	isRefused,
	retrying,
	runTransaction,
	type RetryOptions
} from './retry';

/** An error as mysql2 gives it. */
function dbError(errno: number | undefined, code: string, message: string, fatal = false) {
	return Object.assign(new Error(message), { errno, code, ...(fatal ? { fatal: true } : {}) });
}
const deadlock = () =>
	dbError(
		1213,
		'ER_LOCK_DEADLOCK',
		'Deadlock found when trying to get lock; try restarting transaction'
	);
const notReady = () =>
	dbError(1047, 'ER_UNKNOWN_COM_ERROR', 'WSREP has not yet prepared node for application use');
const duringCommit = () =>
	dbError(1180, 'ER_ERROR_DURING_COMMIT', 'Got error 149 "Lock deadlock" during COMMIT');
const lost = () =>
	dbError(
		undefined,
		'PROTOCOL_CONNECTION_LOST',
		'Connection lost: The server closed the connection.',
		true
	);
const closed = () =>
	dbError(undefined, '', "Can't add new command when connection is in closed state", true);

type Fake = {
	sent: string[];
	released: number;
	destroyed: number;
	query: (q: string | { sql: string }) => Promise<unknown>;
	execute: (q: string | { sql: string }) => Promise<unknown>;
	release(): void;
	destroy(): void;
};

/**
 * A stand-in for a pooled connection: `fail(statement)` may return the error a statement
 * meets. Statements are lower-case words as drizzle sends them ("begin", "commit").
 */
function fakeConnection(fail: (statement: string) => Error | undefined = () => undefined): Fake {
	const conn: Fake = {
		sent: [],
		released: 0,
		destroyed: 0,
		query: async (q) => {
			const text = typeof q === 'string' ? q : q.sql;
			conn.sent.push(text);
			const error = fail(text);
			if (error) throw error;
			return [{ affectedRows: 0, insertId: 0 }, []];
		},
		execute: (q) => conn.query(q),
		release: () => void conn.released++,
		destroy: () => void conn.destroyed++
	};
	return conn;
}

/** Hands out the connections `make` builds, one per getConnection, and keeps them. */
function fakeSource(make: (n: number) => Fake | Error) {
	const handed: Fake[] = [];
	let n = 0;
	return {
		handed,
		getConnection: async () => {
			const made = make(++n);
			if (made instanceof Error) throw made;
			handed.push(made);
			return made as unknown as PoolConnection;
		}
	};
}

/** No real pauses: each is recorded; the jitter's random draw is fixed. */
function quick(extra: RetryOptions = {}) {
	const pauses: number[] = [];
	return {
		pauses,
		options: {
			random: () => 0.5,
			sleep: async (ms: number) => void pauses.push(ms),
			...extra
		} satisfies RetryOptions
	};
}

/** Each connection given back exactly once: released, or destroyed when `broken`. */
function expectAllReturned(handed: Fake[], broken: boolean[] = []) {
	handed.forEach((c, i) => {
		expect(c.released + c.destroyed).toBe(1);
		expect(c.destroyed).toBe(broken[i] ? 1 : 0);
	});
}

describe('runTransaction', () => {
	it('runs a deadlock (or certification) victim again and then succeeds, releasing every connection', async () => {
		const source = fakeSource(() => fakeConnection());
		const { options, pauses } = quick();
		let runs = 0;
		const result = await runTransaction(
			source,
			async (tx) => {
				runs++;
				await tx.execute(sql`select 1`);
				if (runs < 3) throw deadlock();
				return 'made';
			},
			options
		);
		expect(result).toBe('made');
		expect(runs).toBe(3);
		expect(source.handed).toHaveLength(3);
		expectAllReturned(source.handed);
		expect(source.handed[0].sent).toEqual(['begin', 'select 1', 'rollback']);
		expect(source.handed[2].sent).toEqual(['begin', 'select 1', 'commit']);
		// Full jitter at a fixed draw of 0.5: half of 10 ms, then half of 20 ms.
		expect(pauses).toEqual([5, 10]);
	});

	it('never runs more than its budget, and then answers 503 `unavailable`', async () => {
		const source = fakeSource(() => fakeConnection());
		const { options, pauses } = quick({ attempts: 4 });
		let runs = 0;
		const error = await runTransaction(
			source,
			async () => {
				runs++;
				throw deadlock();
			},
			options
		).catch((e: unknown) => e);
		expect(runs).toBe(4);
		expect(pauses).toHaveLength(3);
		expect(error).toBeInstanceOf(ServiceError);
		expect(error).toMatchObject({ status: 503, code: 'unavailable' });
		expect(isRefused((error as Error).cause)).toBe(true);
		expectAllReturned(source.handed);
	});

	it('destroys a connection whose BEGIN a node not ready refused (1047), and tries a fresh one', async () => {
		// The ORM's own transaction() kept such a connection for good.
		const source = fakeSource((n) =>
			fakeConnection((s) => (n === 1 && s === 'begin' ? notReady() : undefined))
		);
		const { options } = quick();
		let runs = 0;
		await runTransaction(source, async () => void runs++, options);
		expect(runs).toBe(1);
		expect(source.handed).toHaveLength(2);
		expect(source.handed[0].sent).toEqual(['begin']);
		expectAllReturned(source.handed, [true, false]);
	});

	it('gives back every connection when BEGIN keeps failing', async () => {
		const source = fakeSource(() =>
			fakeConnection((s) => (s === 'begin' ? notReady() : undefined))
		);
		const { options } = quick({ attempts: 5 });
		await expect(runTransaction(source, async () => 1, options)).rejects.toMatchObject({
			status: 503
		});
		expect(source.handed).toHaveLength(5);
		expectAllReturned(source.handed, [true, true, true, true, true]);
	});

	it('runs again a transaction whose COMMIT certification refused (1213 or 1180)', async () => {
		const failures = [deadlock(), duringCommit()];
		const source = fakeSource((n) =>
			fakeConnection((s) => (s === 'commit' && n <= 2 ? failures[n - 1] : undefined))
		);
		const { options } = quick();
		let runs = 0;
		expect(await runTransaction(source, async () => ++runs, options)).toBe(3);
		expect(source.handed[0].sent).toEqual(['begin', 'commit', 'rollback']);
		expectAllReturned(source.handed);
	});

	it('never runs again once COMMIT was sent and the connection was lost: the outcome is unknown', async () => {
		const source = fakeSource(() =>
			fakeConnection((s) => (s === 'commit' ? lost() : s === 'rollback' ? closed() : undefined))
		);
		const { options } = quick();
		let runs = 0;
		const error = await runTransaction(source, async () => void runs++, options).catch(
			(e: unknown) => e
		);
		expect(runs).toBe(1);
		expect(error).toMatchObject({ status: 503, code: 'unavailable' });
		expect((error as Error).message).toMatch(/may or may not have been made/);
		expectAllReturned(source.handed, [true]);
	});

	it('runs again after a connection lost during the work, destroying it', async () => {
		const source = fakeSource((n) =>
			fakeConnection((s) =>
				n === 1 && s === 'select 1' ? lost() : n === 1 && s === 'rollback' ? closed() : undefined
			)
		);
		const { options } = quick();
		const result = await runTransaction(
			source,
			async (tx) => {
				await tx.execute(sql`select 1`);
				return 'done';
			},
			options
		);
		expect(result).toBe('done');
		expectAllReturned(source.handed, [true, false]);
	});

	it('runs again when no connection could be opened', async () => {
		const source = fakeSource((n) =>
			n === 1
				? dbError(-111, 'ECONNREFUSED', 'connect ECONNREFUSED 127.0.0.1:3306')
				: fakeConnection()
		);
		const { options } = quick();
		expect(await runTransaction(source, async () => 'ok', options)).toBe('ok');
		expectAllReturned(source.handed);
	});

	it('answers the work’s own refusal at once, and gives the connection back', async () => {
		const source = fakeSource(() => fakeConnection());
		const { options, pauses } = quick();
		const refusal = new ServiceError(409, 'Someone else holds that time on the box.');
		let runs = 0;
		const error = await runTransaction(
			source,
			async () => {
				runs++;
				throw refusal;
			},
			options
		).catch((e: unknown) => e);
		expect(error).toBe(refusal);
		expect(runs).toBe(1);
		expect(pauses).toEqual([]);
		expect(source.handed[0].sent).toEqual(['begin', 'rollback']);
		expectAllReturned(source.handed);
	});

	it('keeps the work’s error when the ROLLBACK after it fails, and destroys the connection', async () => {
		const source = fakeSource(() =>
			fakeConnection((s) => (s === 'rollback' ? closed() : undefined))
		);
		const refusal = new ServiceError(422, 'The booking breaks the box’s rules.');
		await expect(
			runTransaction(
				source,
				async () => {
					throw refusal;
				},
				quick().options
			)
		).rejects.toBe(refusal);
		expectAllReturned(source.handed, [true]);
	});

	it('sends each attempt through the connection object of that attempt', async () => {
		// mysql2 wraps the same pooled connection in a new object at each getConnection; the
		// runner keeps one ORM instance per pooled connection, bound to the current wrapper.
		const core = {};
		const source = fakeSource(() => Object.assign(fakeConnection(), { connection: core }));
		const { options } = quick();
		await runTransaction(source, async (tx) => tx.execute(sql`select 1`), options);
		await runTransaction(source, async (tx) => tx.execute(sql`select 2`), options);
		expect(source.handed[0].sent).toEqual(['begin', 'select 1', 'commit']);
		expect(source.handed[1].sent).toEqual(['begin', 'select 2', 'commit']);
	});
});

describe('what is run again', () => {
	it('reads the driver’s error inside the ORM’s wrapper', () => {
		const wrapped = Object.assign(new Error('Failed query: insert …'), { cause: deadlock() });
		expect(driverError(wrapped)?.errno).toBe(1213);
		expect(isRefused(wrapped)).toBe(true);
	});

	it('refusals that wrote nothing: deadlock, lock wait, certification at COMMIT, node not ready', () => {
		for (const e of [
			deadlock(),
			dbError(1205, 'ER_LOCK_WAIT_TIMEOUT', 'Lock wait timeout exceeded'),
			duringCommit(),
			notReady()
		])
			expect(isRefused(e)).toBe(true);
		expect(isRefused(dbError(1062, 'ER_DUP_ENTRY', 'Duplicate entry'))).toBe(false);
		expect(isRefused(new ServiceError(409, 'conflict', undefined, 'conflict'))).toBe(false);
	});

	it('lost connections, and which connections must not go back to the pool', () => {
		expect(isLost(lost())).toBe(true);
		expect(isLost(closed())).toBe(true);
		expect(isLost(dbError(-104, 'ECONNRESET', 'read ECONNRESET'))).toBe(true);
		expect(isLost(dbError(1927, 'ER_CONNECTION_KILLED', 'Connection was killed'))).toBe(true);
		expect(isLost(deadlock())).toBe(false);
		expect(isBroken(notReady())).toBe(true);
		expect(isBroken(lost())).toBe(true);
		expect(isBroken(deadlock())).toBe(false);
	});
});

describe('backoffMs', () => {
	it('is full jitter under a ceiling that doubles from 10 ms and stops at 500 ms', () => {
		const top = (attempt: number) => backoffMs(attempt, { random: () => 0.999999 });
		expect([1, 2, 3, 4, 5, 6, 7].map(top)).toEqual([9, 19, 39, 79, 159, 319, 499]);
		expect(top(50)).toBe(499);
		expect(backoffMs(3, { random: () => 0 })).toBe(0);
		expect(backoffMs(2, { random: () => 0.5, baseMs: 100, capMs: 150 })).toBe(75);
	});
});

describe('retrying', () => {
	it('runs a call again while it is refused, up to the budget', async () => {
		const { options, pauses } = quick({ attempts: 3 });
		let calls = 0;
		await expect(
			retrying(async () => {
				calls++;
				throw notReady();
			}, options)
		).rejects.toMatchObject({ errno: 1047 });
		expect(calls).toBe(3);
		expect(pauses).toHaveLength(2);
	});

	it('answers anything else at once', async () => {
		let calls = 0;
		await expect(
			retrying(async () => {
				calls++;
				throw dbError(1062, 'ER_DUP_ENTRY', 'Duplicate entry');
			}, quick().options)
		).rejects.toMatchObject({ errno: 1062 });
		expect(calls).toBe(1);
	});
});
