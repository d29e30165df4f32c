// The rate limiter's MySQL store made to run its calls again (rate-limit-store.ts), against a
// stand-in for mysql2's callback pool that refuses what a Galera cluster refuses.
import { describe, expect, it } from 'vitest';
import { RateLimiterMySQL, RateLimiterRes } from 'rate-limiter-flexible';
import { retryingStore, STORE_ATTEMPTS } from './rate-limit-store';

type Callback = (error: Error | null, rows?: unknown) => void;

const certification = () =>
	Object.assign(new Error('Deadlock found when trying to get lock; try restarting transaction'), {
		errno: 1213,
		code: 'ER_LOCK_DEADLOCK'
	});
const notReady = () =>
	Object.assign(new Error('WSREP has not yet prepared node for application use'), {
		errno: 1047,
		code: 'ER_UNKNOWN_COM_ERROR'
	});

/**
 * A callback pool with one table of counts. `fail(statement, n)` may return the error the
 * n-th statement of that kind meets; a refused COMMIT leaves the count as it was.
 */
function fakePool(fail: (statement: string, n: number) => Error | undefined) {
	const counts = new Map<string, number>();
	const seen = new Map<string, number>();
	let taken = 0;
	let released = 0;
	const connection = () => {
		let pending: { key: string; points: number } | undefined;
		const query = (text: string, values?: unknown[] | Callback, cb?: Callback) => {
			const done = (typeof values === 'function' ? values : cb) ?? (() => {});
			const args = Array.isArray(values) ? values : [];
			const kind = text.trim().split(/\s+/)[0].toUpperCase();
			const n = (seen.get(kind) ?? 0) + 1;
			seen.set(kind, n);
			const error = fail(kind, n);
			setImmediate(() => {
				if (error) {
					if (kind === 'COMMIT') pending = undefined;
					return done(error);
				}
				if (kind === 'INSERT') pending = { key: String(args[2]), points: Number(args[3]) };
				if (kind === 'SELECT') {
					const key = String(args[2]);
					const points = (counts.get(key) ?? 0) + (pending?.key === key ? pending.points : 0);
					return done(null, [{ points, expire: Date.now() + 60_000 }]);
				}
				if (kind === 'COMMIT' && pending) {
					counts.set(pending.key, (counts.get(pending.key) ?? 0) + pending.points);
					pending = undefined;
				}
				if (kind === 'ROLLBACK') pending = undefined;
				done(null, { affectedRows: 1 });
			});
		};
		return {
			query,
			rollback: (cb?: Callback) => query('ROLLBACK', cb),
			release: () => void released++
		};
	};
	return {
		counts,
		seen,
		stats: () => ({ taken, released }),
		getConnection: (cb: (error: Error | null, conn?: unknown) => void) => {
			taken++;
			setImmediate(() => cb(null, connection()));
		}
	};
}

function limiterOn(pool: ReturnType<typeof fakePool>, points = 5) {
	return retryingStore(
		new RateLimiterMySQL({
			storeClient: pool,
			storeType: 'pool',
			dbName: 'boxwright',
			tableName: 'rate_limits',
			tableCreated: true,
			clearExpiredByTimeout: false,
			keyPrefix: 'test',
			points,
			duration: 60
		}),
		{ sleep: async () => {} }
	);
}

describe('retryingStore', () => {
	it('counts a point whose COMMIT certification refused once, after running it again', async () => {
		const pool = fakePool((kind, n) =>
			kind === 'COMMIT' && n === 1 ? certification() : undefined
		);
		const limiter = limiterOn(pool);
		const res = await limiter.consume('key');
		expect(res.consumedPoints).toBe(1);
		expect(pool.counts.get('test:key')).toBe(1);
		expect(pool.seen.get('BEGIN')).toBe(2);
		expect(pool.stats().taken).toBe(pool.stats().released);
	});

	it('loses no count under refusals: ten points taken through failures are ten', async () => {
		const pool = fakePool((kind, n) =>
			kind === 'COMMIT' && n % 3 === 0 ? certification() : undefined
		);
		const limiter = limiterOn(pool, 100);
		for (let i = 0; i < 10; i++) await limiter.consume('key');
		expect(pool.counts.get('test:key')).toBe(10);
	});

	it('still refuses a spent budget', async () => {
		const pool = fakePool(() => undefined);
		const limiter = limiterOn(pool, 1);
		await limiter.consume('key');
		await expect(limiter.consume('key')).rejects.toBeInstanceOf(RateLimiterRes);
	});

	it('gives up after its attempts when the node stays not ready, with the store’s error', async () => {
		const pool = fakePool((kind) => (kind === 'BEGIN' ? notReady() : undefined));
		const limiter = limiterOn(pool);
		await expect(limiter.consume('key')).rejects.toMatchObject({ errno: 1047 });
		expect(pool.seen.get('BEGIN')).toBe(STORE_ATTEMPTS);
		expect(pool.stats().taken).toBe(pool.stats().released);
	});

	it('runs a read again too', async () => {
		const pool = fakePool((kind, n) => (kind === 'SELECT' && n === 1 ? notReady() : undefined));
		const limiter = limiterOn(pool);
		expect(await limiter.get('key')).toMatchObject({ consumedPoints: 0 });
		expect(pool.seen.get('SELECT')).toBe(2);
	});
});
