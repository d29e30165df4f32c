// The box row is the lock everything that changes a box's time or state takes first
// (bookings, outages, readings, box edits), so those changes are serialised per box.
import { eq } from 'drizzle-orm';
import { ServiceError } from '../errors';
import type { Transaction } from './index';
import { boxes, type Box } from './schema';

/** Locks the box's row (SELECT … FOR UPDATE) for the rest of `tx`; 404 when there is none. */
export async function lockBox(tx: Transaction, boxId: number): Promise<Box> {
	const [box] = await tx.select().from(boxes).where(eq(boxes.id, boxId)).for('update');
	if (!box) throw new ServiceError(404, 'The box was not found.');
	return box;
}
