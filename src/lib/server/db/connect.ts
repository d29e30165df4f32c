import { drizzle } from 'drizzle-orm/mysql2';
import mysql from 'mysql2/promise';
import * as schema from './schema';

const drizzleOptions = { schema, mode: 'default', casing: 'snake_case' } as const;

export type SessionOptions = {
	/**
	 * Galera's `wsrep_sync_wait` for every session (1: a read waits until this node has
	 * applied everything the cluster committed before it, so a session reads what another
	 * node just wrote). Null sends nothing: a single MariaDB needs no such setting.
	 */
	syncWait?: number | null;
	/** Told when a new connection refused its session settings (it is then dropped). */
	onSessionError?: (error: Error) => void;
};

/** MariaDB's "Unknown system variable": a server without Galera's variables. */
const UNKNOWN_VARIABLE = 1193;

/** One pool per process; scripts and the app both come through here. */
export function connect(url: string, connectionLimit = 10, options: SessionOptions = {}) {
	const pool = mysql.createPool({
		uri: url,
		connectionLimit,
		timezone: 'Z',
		// The booking service sends its lock and the reads it protects in one round trip.
		// Every value still goes through placeholders; nothing is spliced into SQL text.
		multipleStatements: true,
		supportBigNumbers: true
	});
	prepareSessions(pool.pool, options);
	const db = drizzle(retryingReads(pool), drizzleOptions);
	return { pool, db };
}

/** The pause before a plain read is sent again, for the balancer to move to a ready node. */
export const READ_RETRY_MS = 500;

/**
 * The pool as drizzle's `db` sees it (transactions take their connections from the pool
 * itself, transaction.ts): a plain read outside a transaction that a node not ready (1047)
 * refused, or whose connection was lost (a node stopping while the balancer has not yet
 * moved to another, about 0.3 s), is sent once more after READ_RETRY_MS, on a new connection
 * (mysql2 drops a broken one). Never a write, nor a statement list: only text that is one
 * SELECT, which changes nothing however often it runs.
 */
export function retryingReads<P extends Pick<mysql.Pool, 'query' | 'execute'>>(
	pool: P,
	sleep = (ms: number) => new Promise<void>((resolve) => setTimeout(resolve, ms))
): P {
	const again = (method: 'query' | 'execute') =>
		async function (...args: unknown[]) {
			const send = () => (pool[method] as (...a: unknown[]) => Promise<unknown>).apply(pool, args);
			try {
				return await send();
			} catch (error) {
				if (!isPlainRead(args[0]) || !isTransient(error)) throw error;
				await sleep(READ_RETRY_MS);
				return send();
			}
		};
	const query = again('query');
	const execute = again('execute');
	return new Proxy(pool, {
		get(target, prop) {
			if (prop === 'query') return query;
			if (prop === 'execute') return execute;
			const value = Reflect.get(target, prop, target);
			return typeof value === 'function' ? value.bind(target) : value;
		}
	});
}

/** One SELECT, nothing after it, no locking clause. */
export function isPlainRead(statement: unknown) {
	const text =
		typeof statement === 'string' ? statement : (statement as { sql?: unknown } | null)?.sql;
	if (typeof text !== 'string') return false;
	return (
		/^[\s(]*select\b/i.test(text) &&
		!/;\s*\S/.test(text) &&
		!/\bfor\s+update\b|\block\s+in\s+share\s+mode\b|\binto\s+@|\binto\s+outfile\b/i.test(text)
	);
}

/**
 * A node not ready (1047: joining, donating or cut off), shutting down (1053), a connection
 * killed or lost (1927, 2006, 2013, or the driver's own fatal errors).
 */
const TRANSIENT_ERRNOS = new Set([1047, 1053, 1927, 2006, 2013]);
const TRANSIENT_CODES = new Set([
	'PROTOCOL_CONNECTION_LOST',
	'ECONNRESET',
	'ECONNREFUSED',
	'EPIPE'
]);

export function isTransient(error: unknown) {
	let err = error as
		{ errno?: number; code?: string; fatal?: boolean; cause?: unknown } | undefined;
	for (let depth = 0; err && typeof err === 'object' && depth < 4; depth++) {
		if (
			(err.errno !== undefined && TRANSIENT_ERRNOS.has(err.errno)) ||
			(err.code !== undefined && TRANSIENT_CODES.has(err.code)) ||
			err.fatal === true
		)
			return true;
		err = err.cause as typeof err;
	}
	return false;
}

type CoreConnection = {
	on(event: 'error', listener: (error: Error) => void): unknown;
	query(sql: string, callback: (error: Error | null) => void): unknown;
	destroy(): void;
};

/**
 * Every new connection of the pool, before its first use (mysql2 emits 'connection' before
 * it hands the connection out, so the SET is queued ahead of the caller's statement).
 */
function prepareSessions(core: mysql.Pool['pool'], options: SessionOptions) {
	const syncWait = options.syncWait ?? null;
	core.on('connection', (connection: CoreConnection) => {
		// mysql2 takes a broken connection out of the pool on its first 'error' (a `once`
		// listener); a second error on the dying connection (a ROLLBACK sent after the loss,
		// as the rate limiter's store does) would otherwise be an uncaught exception.
		connection.on('error', () => {});
		if (syncWait === null) return;
		connection.query(`SET SESSION wsrep_sync_wait = ${Math.trunc(syncWait)}`, (error) => {
			if (!error) return;
			options.onSessionError?.(error);
			// A node that is not ready (1047) refuses it: drop the connection rather than use
			// one that may read stale rows later. A server without the variable keeps it.
			if ((error as { errno?: number }).errno !== UNKNOWN_VARIABLE) connection.destroy();
		});
	});
}

export type Database = ReturnType<typeof connect>['db'];

/** What a drizzle instance bound to one connection sends its statements through. */
export type Client = Pick<mysql.PoolConnection, 'query' | 'execute'>;

/**
 * A drizzle instance whose statements all go to `client` (one pooled connection), for
 * transaction.ts: its `transaction()` then neither takes nor releases a connection itself.
 */
export function onClient(client: Client) {
	return drizzle(client as mysql.PoolConnection, drizzleOptions);
}

export type BoundDatabase = ReturnType<typeof onClient>;
