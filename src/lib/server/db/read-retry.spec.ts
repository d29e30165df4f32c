// retryingReads (connect.ts): a plain read refused by a node not ready, or cut by a lost
// connection, is sent once more after a pause; nothing else is. On a stand-in pool.
import { describe, expect, it } from 'vitest';
import { isPlainRead, READ_RETRY_MS, retryingReads } from './connect';

function failing(errors: unknown[]) {
	const sent: unknown[] = [];
	const pool = {
		marker: 'pool',
		async query(statement: unknown) {
			sent.push(statement);
			const error = errors.shift();
			if (error) throw error;
			return [[{ ok: 1 }], []];
		},
		async execute(statement: unknown) {
			return pool.query(statement);
		},
		getConnection() {
			return this.marker;
		}
	};
	const pauses: number[] = [];
	const wrapped = retryingReads(pool as never, async (ms) => {
		pauses.push(ms);
	}) as unknown as typeof pool;
	return { wrapped, sent, pauses };
}

const notReady = Object.assign(new Error('WSREP has not yet prepared node'), { errno: 1047 });
const lost = Object.assign(new Error('Connection lost'), {
	code: 'PROTOCOL_CONNECTION_LOST',
	fatal: true
});

describe('retryingReads', () => {
	it('sends a plain SELECT again once after a pause when the node was not ready', async () => {
		const { wrapped, sent, pauses } = failing([notReady]);
		await expect(wrapped.query({ sql: 'select `id` from `boxes`' })).resolves.toBeDefined();
		expect(sent).toHaveLength(2);
		expect(pauses).toEqual([READ_RETRY_MS]);
	});

	it('retries a lost connection on execute too, found inside a wrapping error', async () => {
		const { wrapped, sent } = failing([new Error('query failed', { cause: lost })]);
		await expect(wrapped.execute('SELECT 1')).resolves.toBeDefined();
		expect(sent).toHaveLength(2);
	});

	it('gives up after the second failure', async () => {
		const { wrapped, sent } = failing([notReady, notReady]);
		await expect(wrapped.query('select 1')).rejects.toBe(notReady);
		expect(sent).toHaveLength(2);
	});

	it('never sends a write again', async () => {
		const { wrapped, sent, pauses } = failing([lost]);
		await expect(wrapped.query('insert into `outbox` values (1)')).rejects.toBe(lost);
		expect(sent).toHaveLength(1);
		expect(pauses).toEqual([]);
	});

	it('does not retry other errors', async () => {
		const dup = Object.assign(new Error('Duplicate'), { errno: 1062 });
		const { wrapped, sent } = failing([dup]);
		await expect(wrapped.query('select 1')).rejects.toBe(dup);
		expect(sent).toHaveLength(1);
	});

	it('passes everything else through to the pool', () => {
		const { wrapped } = failing([]);
		expect(wrapped.getConnection()).toBe('pool');
		expect('getConnection' in wrapped).toBe(true);
	});
});

describe('isPlainRead', () => {
	it('is one SELECT without a locking clause', () => {
		expect(isPlainRead('select * from boxes')).toBe(true);
		expect(isPlainRead({ sql: '(select 1) union (select 2)' })).toBe(true);
		expect(isPlainRead('select * from boxes for update')).toBe(false);
		expect(isPlainRead('select 1; update boxes set lock_version = 1')).toBe(false);
		expect(isPlainRead('update boxes set name = ?')).toBe(false);
		expect(isPlainRead('SELECT 1 INTO @x')).toBe(false);
		expect(isPlainRead(undefined)).toBe(false);
	});
});
