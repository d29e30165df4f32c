// The transaction runner and what it knows about database errors. transaction.ts runs it on
// the app's pool; tests run it on pools and connections of their own.
//
// Each attempt takes its own connection and gives it back in `finally`, whatever happens:
// drizzle's own transaction() sends BEGIN before the try that releases its connection, so a
// refused BEGIN (a Galera node that is joining or cut off answers 1047) kept the connection
// for good, and after the pool's twenty the process never answered again. Here drizzle only
// runs BEGIN, the work, COMMIT or ROLLBACK on a connection it is lent; a connection that
// may be broken is destroyed instead of going back to the pool (its successor may reach a
// healthy node through the balancer).
//
// An attempt is run again when the server refused it and so wrote nothing: an InnoDB
// deadlock victim, a lock wait that timed out, a Galera certification conflict (reported as
// a deadlock, 1213, or as an error during COMMIT, 1180), a node not ready (1047), or a
// connection lost before COMMIT was sent. A connection lost during COMMIT leaves it unknown
// whether the change was made; that attempt is never repeated (an outage must not be made
// twice), and the person is told to look.
import type { PoolConnection } from 'mysql2/promise';
import { ServiceError } from '../errors';
import { onClient, type BoundDatabase, type Client } from './connect';
import { send, type CoreConnection } from './raw';

export type Transaction = Parameters<Parameters<BoundDatabase['transaction']>[0]>[0];

/** Where connections come from: mysql2's promise pool, or a stand-in in tests. */
export type ConnectionSource = { getConnection(): Promise<PoolConnection> };

export type RetryOptions = {
	/** Attempts in all, the first included. */
	attempts?: number;
	/** Back-off before the second attempt's ceiling; it doubles up to `capMs`. */
	baseMs?: number;
	capMs?: number;
	/** [0, 1), as Math.random; tests fix it. */
	random?: () => number;
	/** Waits `ms`; tests count the pauses instead. */
	sleep?: (ms: number) => Promise<void>;
	/** Told before each pause (for a log line or a test). */
	onRetry?: (error: unknown, attempt: number) => void;
};

export const DEFAULT_ATTEMPTS = 10;
const BASE_MS = 10;
const CAP_MS = 500;

type DriverError = { code?: string; errno?: number; fatal?: boolean; message?: string };

/** The driver's error, also inside drizzle's DrizzleQueryError (which keeps it as `cause`). */
export function driverError(e: unknown): DriverError | undefined {
	let err = e as (DriverError & { cause?: unknown }) | undefined;
	for (let depth = 0; err && typeof err === 'object' && depth < 4; depth++) {
		if (err.errno !== undefined || err.fatal || (err.code && !(err instanceof ServiceError)))
			return err;
		err = err.cause as typeof err;
	}
	return undefined;
}

/** The server refused the statement and wrote nothing: running the attempt again is safe. */
const REFUSED_ERRNOS = new Set([
	1213, // ER_LOCK_DEADLOCK: deadlock victim, or Galera's certification conflict
	1205, // ER_LOCK_WAIT_TIMEOUT
	1180, // ER_ERROR_DURING_COMMIT: Galera's conflict found at COMMIT
	1047 // ER_UNKNOWN_COM_ERROR: "WSREP has not yet prepared node for application use"
]);
const REFUSED_CODES = new Set(['ER_LOCK_DEADLOCK', 'ER_LOCK_WAIT_TIMEOUT']);

/** The connection is gone (or the server went): whatever was under way was not finished. */
const LOST_CODES = new Set([
	'PROTOCOL_CONNECTION_LOST',
	'PROTOCOL_SEQUENCE_TIMEOUT',
	'ECONNRESET',
	'ECONNREFUSED',
	'EPIPE',
	'ETIMEDOUT',
	'EHOSTUNREACH',
	'ER_CONNECTION_KILLED',
	'ER_SERVER_SHUTDOWN'
]);
const LOST_ERRNOS = new Set([1927, 1053, 2006, 2013]);

/** A refusal by the server that wrote nothing: deadlock, lock wait, certification, not ready. */
export function isRefused(e: unknown): boolean {
	const err = driverError(e);
	if (!err) return false;
	return (
		(err.errno !== undefined && REFUSED_ERRNOS.has(err.errno)) ||
		(err.code !== undefined && REFUSED_CODES.has(err.code))
	);
}

/** A connection lost (or refused, or killed) under the statement. */
export function isLost(e: unknown): boolean {
	const err = driverError(e);
	if (!err) return false;
	return (
		err.fatal === true ||
		(err.code !== undefined && LOST_CODES.has(err.code)) ||
		(err.errno !== undefined && LOST_ERRNOS.has(err.errno)) ||
		/connection is in closed state|Can't write in closed state/.test(err.message ?? '')
	);
}

/** Worth another attempt of something that changes nothing, or changes it only once. */
export function isRetryable(e: unknown): boolean {
	return isRefused(e) || isLost(e);
}

/** A connection that must not go back to the pool: lost, or on a node that is not ready. */
export function isBroken(e: unknown): boolean {
	return isLost(e) || driverError(e)?.errno === 1047;
}

/**
 * The pause before attempt `attempt + 1`: "full jitter", a random time up to a ceiling that
 * doubles from `baseMs` and stops at `capMs`, so attempts that collided spread out instead
 * of colliding again (Brooker, "Exponential Backoff And Jitter", AWS Architecture Blog, 2015).
 */
export function backoffMs(attempt: number, options: RetryOptions = {}): number {
	const base = options.baseMs ?? BASE_MS;
	const cap = options.capMs ?? CAP_MS;
	const ceiling = Math.min(cap, base * 2 ** Math.min(attempt - 1, 30));
	return Math.floor((options.random ?? Math.random)() * ceiling);
}

const sleep = (ms: number) => new Promise<void>((done) => setTimeout(done, ms));

/** What the person is told when the database would not take the change. */
export function databaseUnavailable(cause: unknown): ServiceError {
	const error = new ServiceError(
		503,
		'The database is busy or briefly unavailable, and nothing was saved. Please try again in a moment.',
		undefined,
		'unavailable'
	);
	(error as Error).cause = cause;
	nothingSaved.add(error);
	return error;
}

const nothingSaved = new WeakSet<object>();

/** True for the 503 of a transaction refused every time: it wrote nothing at all. */
export function wroteNothing(e: unknown): boolean {
	return typeof e === 'object' && e !== null && nothingSaved.has(e);
}

function outcomeUnknown(cause: unknown): ServiceError {
	const error = new ServiceError(
		503,
		'The connection to the database was lost while saving, so the change may or may not have been made. Please look before trying again.',
		undefined,
		'unavailable'
	);
	(error as Error).cause = cause;
	return error;
}

/**
 * Runs `call` again while it fails with a refusal or a lost connection, up to the budget,
 * with the same back-off; for statements outside a transaction (the rate limiter's store).
 */
export async function retrying<T>(call: () => Promise<T>, options: RetryOptions = {}): Promise<T> {
	const attempts = options.attempts ?? DEFAULT_ATTEMPTS;
	for (let attempt = 1; ; attempt++) {
		try {
			return await call();
		} catch (e) {
			if (attempt >= attempts || !isRetryable(e)) throw e;
			options.onRetry?.(e, attempt);
			await (options.sleep ?? sleep)(backoffMs(attempt, options));
		}
	}
}

type Phase = 'connect' | 'begin' | 'work' | 'commit';
type Attempt<T> = { ok: true; value: T } | { ok: false; error: unknown; phase: Phase };

/**
 * One drizzle instance per pooled connection, kept for the connection's life: building one
 * reads the whole schema (about 0.1 ms). It is bound to a lease whose `current` is the
 * connection object of this transaction, so whatever wraps that object (the statement
 * counter of tests) sees every statement.
 */
type Lease = Client & { current: Client };
const bound = new WeakMap<object, { lease: Lease; db: BoundDatabase }>();

function bind(connection: PoolConnection): BoundDatabase {
	// mysql2's promise wrapper is new for each getConnection; the connection under it is not.
	const key = (connection as { connection?: object }).connection ?? connection;
	let entry = bound.get(key);
	if (!entry) {
		const lease: Lease = {
			current: connection,
			query: ((...args: Parameters<Client['query']>) =>
				lease.current.query(...args)) as Client['query'],
			execute: ((...args: Parameters<Client['execute']>) =>
				lease.current.execute(...args)) as Client['execute']
		};
		entry = { lease, db: onClient(lease) };
		bound.set(key, entry);
	}
	entry.lease.current = connection;
	return entry.db;
}

async function attemptOnce<T>(
	source: ConnectionSource,
	work: (tx: Transaction) => Promise<T>
): Promise<Attempt<T>> {
	let connection: PoolConnection;
	try {
		connection = await source.getConnection();
	} catch (error) {
		return { ok: false, error, phase: 'connect' };
	}
	const state: { phase: Phase; workError?: { error: unknown } } = { phase: 'begin' };
	let broken = false;
	try {
		const value = await bind(connection).transaction(async (tx) => {
			state.phase = 'work';
			try {
				const result = await work(tx);
				state.phase = 'commit';
				return result;
			} catch (error) {
				state.workError = { error };
				throw error;
			}
		});
		return { ok: true, value };
	} catch (e) {
		// drizzle answers a failed work with ROLLBACK; when that fails too, its error replaces
		// the work's, and the session's state is unknown: the connection goes.
		const error = state.workError ? state.workError.error : e;
		broken = isBroken(e) || isBroken(error) || (state.workError !== undefined && e !== error);
		return { ok: false, error, phase: state.phase };
	} finally {
		if (broken) connection.destroy();
		else connection.release();
	}
}

/**
 * Runs `work` in a transaction on a connection from `source`; again, after a pause, while
 * the attempt was refused without writing anything (see the top of this file), up to
 * `attempts` in all. Never again once COMMIT may have succeeded. When the budget is spent
 * on refusals the answer is a 503 ServiceError (`unavailable`); any other error is the
 * work's own.
 */
export function runTransaction<T>(
	source: ConnectionSource,
	work: (tx: Transaction) => Promise<T>,
	options: RetryOptions = {}
): Promise<T> {
	return attemptAgain(() => attemptOnce(source, work), options);
}

/** The loop of runTransaction and runBatches: which failures get another attempt, and when. */
async function attemptAgain<T>(
	attemptOnce: () => Promise<Attempt<T>>,
	options: RetryOptions
): Promise<T> {
	const attempts = options.attempts ?? DEFAULT_ATTEMPTS;
	for (let attempt = 1; ; attempt++) {
		const outcome = await attemptOnce();
		if (outcome.ok) return outcome.value;
		const { error, phase } = outcome;
		const refused = isRefused(error);
		const lost = !refused && isLost(error);
		if (lost && phase === 'commit') throw outcomeUnknown(error);
		if (!refused && !lost) throw error;
		if (attempt >= attempts) throw databaseUnavailable(error);
		options.onRetry?.(error, attempt);
		await (options.sleep ?? sleep)(backoffMs(attempt, options));
	}
}

/**
 * A transaction sent as a few batches of text statements on one core connection (raw.ts):
 * START TRANSACTION rides with the first batch and COMMIT with the last, so a transaction of
 * two batches costs two round trips. The booking decision's (services/booking-decision.ts).
 */
export class Batches {
	phase: Phase = 'begin';
	/** START TRANSACTION was sent and no COMMIT has answered: ROLLBACK is owed. */
	open = false;
	constructor(private readonly connection: CoreConnection) {}

	/**
	 * START TRANSACTION, then `text`; the answers of `text`'s statements. `before`: plain
	 * reads sent ahead of START TRANSACTION in the same round trip, outside the transaction
	 * (so they neither fix its snapshot nor lengthen its locks); their answers come first.
	 */
	async begin(
		text: string,
		values: unknown[],
		before?: { text: string; values: unknown[] }
	): Promise<unknown[]> {
		this.open = true;
		const lead = before ? `${before.text};\n` : '';
		const results = await send<unknown[]>(
			this.connection,
			`${lead}START TRANSACTION;\n${text}`,
			before ? [...before.values, ...values] : values
		);
		this.phase = 'work';
		if (!before) return results.slice(1);
		const ahead = statementCount(before.text);
		return [...results.slice(0, ahead), ...results.slice(ahead + 1)];
	}

	/**
	 * Ends the transaction now, without waiting for ROLLBACK's answer: a refusal is known, and
	 * the box lock is given up before the refusal's answer is even built. The connection goes
	 * back to the pool once ROLLBACK has answered (runBatches).
	 */
	rollback() {
		if (!this.open) return;
		this.open = false;
		this.ending = send(this.connection, 'ROLLBACK').then(() => undefined);
	}

	/** A ROLLBACK sent by rollback(), until it answers. */
	ending?: Promise<void>;

	/** `text`, then COMMIT; the answers of `text`'s statements. */
	async commit(text: string, values: unknown[]): Promise<unknown[]> {
		this.phase = 'commit';
		const results = await send<unknown[]>(this.connection, `${text};\nCOMMIT`, values);
		this.open = false;
		return results.slice(0, -1);
	}
}

/** Statements in a batch's text: its `;` separators (none inside the texts sent here). */
const statementCount = (text: string) => text.split(';').length;

/** Where runBatches takes its connections: the core pool (raw.ts take), or a test's. */
export type BatchSource = () => Promise<CoreConnection>;

async function batchAttempt<T>(
	source: BatchSource,
	work: (tx: Batches) => Promise<T>
): Promise<Attempt<T>> {
	let connection: CoreConnection;
	try {
		connection = await source();
	} catch (error) {
		return { ok: false, error, phase: 'connect' };
	}
	const tx = new Batches(connection);
	let broken = false;
	try {
		return { ok: true, value: await work(tx) };
	} catch (error) {
		broken = isBroken(error);
		return { ok: false, error, phase: tx.phase };
	} finally {
		if (broken) connection.destroy();
		else if (tx.ending)
			tx.ending.then(
				() => connection.release(),
				() => connection.destroy()
			);
		else if (!tx.open) connection.release();
		// A refusal (or a failed batch) leaves the transaction open. Its ROLLBACK is not
		// waited for: the answer goes out while it runs, and the connection goes back to the
		// pool once it has (or is dropped, when even that failed). That saves the refusal a
		// round trip, a third of a taken slot's time in the database.
		else
			send(connection, 'ROLLBACK').then(
				() => connection.release(),
				() => connection.destroy()
			);
	}
}

/**
 * runTransaction for work written as batches (Batches): the same attempts, back-off and
 * outcomes, on connections of the core pool.
 */
export function runBatches<T>(
	source: BatchSource,
	work: (tx: Batches) => Promise<T>,
	options: RetryOptions = {}
): Promise<T> {
	return attemptAgain(() => batchAttempt(source, work), options);
}
