import { describe, expect, it, vi } from 'vitest';
import { send } from './raw';

/** A stand-in for mysql2's core connection: answers each query on the next tick. */
const fake = (answer: unknown, error: Error | null = null) =>
	({
		query: (_text: string, _values: unknown[], done: (e: Error | null, r?: unknown) => void) =>
			setImmediate(() => done(error, answer))
	}) as unknown as Parameters<typeof send>[0];

describe('send (the hot paths’ text SQL)', () => {
	it('answers the driver’s results and captures no stack per statement', async () => {
		// mysql2's promise API calls Error.captureStackTrace on every query to keep the caller's
		// stack (mysql2/lib/promise/capture_local_err.js); the hot paths do without.
		const capture = vi.spyOn(Error, 'captureStackTrace');
		expect(await send(fake([{ one: 1 }]), 'SELECT 1 AS one')).toEqual([{ one: 1 }]);
		expect(capture).not.toHaveBeenCalled();
		capture.mockRestore();
	});

	it('rejects with the driver’s own error', async () => {
		const error = Object.assign(new Error('Deadlock found'), { errno: 1213 });
		await expect(send(fake(undefined, error), 'UPDATE boxes SET x = 1')).rejects.toBe(error);
	});
});
