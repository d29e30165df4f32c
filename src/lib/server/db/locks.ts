// The row locks that serialise work, as writes. `SELECT … FOR UPDATE` locks a row only on the
// node that runs it: on a Galera cluster two nodes could each lock "the same" box row, read
// no booking, insert one each, and both certify, since their inserts touch different rows.
// So a lock here is `UPDATE … SET lock_version = lock_version + 1`: on one node it takes
// the same row lock as FOR UPDATE, and across nodes two such transactions both wrote that
// row, so certification refuses one and transaction() runs it again, when it sees the
// other's rows.
//
// The lock is the transaction's first statement. InnoDB fixes a transaction's snapshot at its
// first plain read: a read before the lock would leave every later plain read blind to what
// was committed while the lock was awaited. A caller that must first find which row to lock
// (the box of a booking, an outage, a task) reads that before the transaction.
//
// A row that the transaction updates anyway (a booking, a request, a stock count) already
// certifies: its FOR UPDATE stays as it is.
import { eq, sql, type SQL } from 'drizzle-orm';
import { ServiceError } from '../errors';
import type { Transaction } from './index';
import { boxes, users, type Box } from './schema';

type ResultHeader = { affectedRows: number };

/** Bumps lock_version on the rows `where` picks; how many there were. */
async function certify(tx: Transaction, table: typeof boxes | typeof users, where: SQL) {
	// Spelled out rather than tx.update(): the builder would also set $onUpdate columns.
	const [header] = (await tx.execute(
		sql`UPDATE ${table} SET lock_version = lock_version + 1 WHERE ${where}`
	)) as unknown as [ResultHeader];
	return header.affectedRows;
}

/**
 * Locks the box's row for the rest of `tx` (a certified write, see above) and reads it;
 * 404 when there is none. Bookings, outages, readings, glove changes and box edits all
 * take it first, so changes to a box's time or state are serialised per box, on one node
 * or several.
 */
export async function lockBox(tx: Transaction, boxId: number): Promise<Box> {
	if (!(await certify(tx, boxes, eq(boxes.id, boxId))))
		throw new ServiceError(404, 'The box was not found.');
	// A locking read: it sees the newest row whatever the snapshot.
	const [box] = await tx.select().from(boxes).where(eq(boxes.id, boxId)).for('update');
	return box;
}

/**
 * Locks a person's row (by id, or by e-mail for a reset request) as a certified write, for
 * work that inserts rows of theirs (training requests, links) and must see the others' first.
 * False when there is no such person. The caller reads the row afterwards.
 */
export async function lockUser(tx: Transaction, who: number | { email: string }) {
	const where = typeof who === 'number' ? eq(users.id, who) : eq(users.email, who.email);
	return (await certify(tx, users, where)) > 0;
}
