// A count of the SQL statements each request sends, for tests that hold a page to its budget
// (COUNT_STATEMENTS=1; see server/count-statements.ts). Off, nothing here is installed: the
// pool's methods stay mysql2's own and no request gets a tally.
import { AsyncLocalStorage } from 'node:async_hooks';
import type { Pool, PoolConnection } from 'mysql2/promise';

type Tally = { statements: number };

const tally = new AsyncLocalStorage<Tally>();

function counted<F extends (...args: never[]) => unknown>(method: F, self: object): F {
	return ((...args: Parameters<F>) => {
		const current = tally.getStore();
		if (current) current.statements++;
		return method.apply(self, args);
	}) as F;
}

/**
 * Counts every query and execute sent through `pool`, for the request whose code sends it.
 * The count is taken where the call is made, in the caller's async context: the promise
 * pool's query and execute call the core pool's at once (as the rate limiter's store does
 * directly), and a connection taken for a transaction is counted on its own methods. A
 * multi-statement query counts once: it is one round trip.
 */
export function countStatementsOn(pool: Pool) {
	const core = pool.pool;
	core.query = counted(core.query, core);
	core.execute = counted(core.execute, core);
	const getConnection = pool.getConnection;
	pool.getConnection = async function (): Promise<PoolConnection> {
		const connection = await getConnection.call(pool);
		connection.query = counted(connection.query, connection);
		connection.execute = counted(connection.execute, connection);
		return connection;
	};
}

/** Runs `fn` with a fresh tally; `count()` reads how many statements it has sent so far. */
export function withStatementTally<T>(fn: () => T): { result: T; count: () => number } {
	const mine: Tally = { statements: 0 };
	return { result: tally.run(mine, fn), count: () => mine.statements };
}

/**
 * Counts one statement for the current request's tally, for code that talks to mysql2's
 * core pool directly (db/raw.ts). Without a tally (COUNT_STATEMENTS off) it does nothing.
 */
export function noteStatement() {
	const current = tally.getStore();
	if (current) current.statements++;
}
