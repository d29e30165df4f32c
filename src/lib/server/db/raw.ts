// Text SQL straight on mysql2's core (callback) pool, for the two paths every request or every
// booking takes: the session check (auth.ts) and the booking decision
// (services/booking-decision.ts). Everything else goes through drizzle.
//
// Why not drizzle or mysql2's promise API here (bench:booking, this machine, 20 connections):
// - drizzle builds each statement from the schema on every call: 13–19 % of a booking
//   request's CPU;
// - mysql2's promise wrapper makes an Error on every call to keep the caller's stack for a
//   failure (`new Error()` captures the stack): about 3 %.
// The callbacks below do neither. Values still only ever travel as placeholders.
import type { Pool as CorePool, PoolConnection as CoreConnection } from 'mysql2';
import { isTransient, READ_RETRY_MS } from './connect';
import { noteStatement } from './statement-count';

export type { CoreConnection, CorePool };

/** What one statement answers: rows of a SELECT, or the header of a write. */
export type StatementResult =
	Record<string, unknown>[] | { affectedRows: number; insertId: number };

/** Sends `text` (one statement or several, separated by `;`) with its values on `target`. */
export function send<T = unknown>(
	target: CoreConnection | CorePool,
	text: string,
	values: unknown[] = []
): Promise<T> {
	// The pool's own query is counted where statement-count.ts wraps it; a lent connection's
	// is counted here.
	if (!('getConnection' in target)) noteStatement();
	return new Promise((resolve, reject) => {
		target.query(text, values, (error, results) => (error ? reject(error) : resolve(results as T)));
	});
}

/** A connection of the pool, for statements that must share one session (a transaction). */
export function take(pool: CorePool): Promise<CoreConnection> {
	return new Promise((resolve, reject) => {
		pool.getConnection((error, connection) => (error ? reject(error) : resolve(connection)));
	});
}

/**
 * A plain read on the pool, sent once more after READ_RETRY_MS when the node was not ready
 * or the connection dropped, as connect.ts does for drizzle's reads.
 */
export async function readRows<T>(pool: CorePool, text: string, values: unknown[]): Promise<T[]> {
	try {
		return await send<T[]>(pool, text, values);
	} catch (error) {
		if (!isTransient(error)) throw error;
		await new Promise((resolve) => setTimeout(resolve, READ_RETRY_MS));
		return send<T[]>(pool, text, values);
	}
}
