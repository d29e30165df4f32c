import { describe, expect, it } from 'vitest';
import type { Pool } from 'mysql2/promise';
import { countStatementsOn, withStatementTally } from './statement-count';

/** A stand-in for mysql2's promise pool: what each method was called with, answered at once. */
function fakePool() {
	const sent: string[] = [];
	const answer = (sql: string) => {
		sent.push(sql);
		return Promise.resolve([[], []]);
	};
	const core = { query: answer, execute: answer };
	const pool = {
		pool: core,
		// As mysql2's: the promise pool hands each call to the core pool at once.
		query: (sql: string) => core.query(sql),
		execute: (sql: string) => core.execute(sql),
		getConnection: async () => ({ query: answer, execute: answer })
	};
	return { pool: pool as unknown as Pool, sent };
}

describe('countStatementsOn', () => {
	it('counts each query and execute once, for the tally it was sent under', async () => {
		const { pool, sent } = fakePool();
		countStatementsOn(pool);
		const a = withStatementTally(async () => {
			await pool.query('SELECT 1');
			await pool.execute('SELECT 2');
		});
		const b = withStatementTally(async () => {
			await Promise.all([pool.query('SELECT 3'), pool.query('SELECT 4'), pool.query('SELECT 5')]);
		});
		await Promise.all([a.result, b.result]);
		expect([a.count(), b.count()]).toEqual([2, 3]);
		expect(sent).toHaveLength(5);
	});

	it('counts what a transaction sends on its own connection', async () => {
		const { pool } = fakePool();
		countStatementsOn(pool);
		const t = withStatementTally(async () => {
			const connection = await pool.getConnection();
			await connection.query('BEGIN');
			await connection.execute('SELECT 1');
			await connection.query('COMMIT');
		});
		await t.result;
		expect(t.count()).toBe(3);
	});

	it('counts nothing outside a tally, and a tally counts nothing sent outside it', async () => {
		const { pool, sent } = fakePool();
		countStatementsOn(pool);
		const t = withStatementTally(() => Promise.resolve());
		await t.result;
		await pool.query('SELECT 1');
		expect(t.count()).toBe(0);
		expect(sent).toEqual(['SELECT 1']);
	});
});
