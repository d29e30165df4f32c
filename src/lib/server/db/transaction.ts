// Every write transaction goes through here. InnoDB may pick any transaction as a deadlock
// victim (the outbox worker's claims meet the inserts of whoever queues mail, bookings meet
// outages on a box's row), and a Galera cluster reports certification conflicts the same
// way: such a transaction is simply run again, a few times, with a short random pause.
import { db, type Transaction } from './index';

const RETRYABLE_CODES = new Set(['ER_LOCK_DEADLOCK', 'ER_LOCK_WAIT_TIMEOUT']);

export function isRetryable(e: unknown): boolean {
	const err = e as { code?: string; errno?: number; cause?: { code?: string; errno?: number } };
	const code = err?.code ?? err?.cause?.code;
	const errno = err?.errno ?? err?.cause?.errno;
	// 1213: deadlock (and Galera's certification conflict); 1205: lock wait timeout.
	return (code !== undefined && RETRYABLE_CODES.has(code)) || errno === 1213 || errno === 1205;
}

/** Runs `work` in a transaction, again when MariaDB chose it as a deadlock victim. */
export async function transaction<T>(
	work: (tx: Transaction) => Promise<T>,
	attempts = 4
): Promise<T> {
	for (let i = 1; ; i++) {
		try {
			return await db.transaction(work);
		} catch (e) {
			if (i >= attempts || !isRetryable(e)) throw e;
			await new Promise((done) => setTimeout(done, 10 * 2 ** i + Math.random() * 20));
		}
	}
}
