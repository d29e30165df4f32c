// Every write transaction goes through here. InnoDB may pick any transaction as a deadlock
// victim (the outbox worker's claims meet the inserts of whoever queues mail, bookings meet
// outages on a box's row), and on a Galera cluster two nodes' transactions that touched one
// row meet at certification, where one of them is refused; a node that is joining or cut
// off refuses everything for a while. Such a transaction is run again on a fresh connection
// after a short random pause, up to DB_TX_ATTEMPTS times (retry.ts says exactly when).
import { config } from '../config';
import { pool, type Transaction } from './index';
import { take } from './raw';
import { runBatches, runTransaction, type Batches } from './retry';

export { isRetryable } from './retry';
export type { Batches } from './retry';

/** Runs `work` in a transaction; again when it was refused without writing anything. */
export async function transaction<T>(
	work: (tx: Transaction) => Promise<T>,
	attempts = config.dbTxAttempts
): Promise<T> {
	return runTransaction(pool, work, { attempts });
}

/** As transaction(), for work sent as text batches on a core connection (retry.ts Batches). */
export function batchTransaction<T>(
	work: (tx: Batches) => Promise<T>,
	attempts = config.dbTxAttempts
): Promise<T> {
	return runBatches(() => take(pool.pool), work, { attempts });
}
