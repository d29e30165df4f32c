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
	const db = drizzle(pool, drizzleOptions);
	return { pool, db };
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
