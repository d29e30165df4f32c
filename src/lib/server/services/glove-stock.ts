// Spare gloves on the shelf: a quantity per material, size, thickness and hand. Fitting a
// glove in a change takes one; at or below a kind's minimum the managers are told.
import { and, asc, eq, sql } from 'drizzle-orm';
import { materialLabel } from '$lib/domain/gloves';
import type { FittedGlove } from '$lib/domain/glove-change';
import { hasRole } from '$lib/domain/roles';
import { db, type Transaction } from '../db';
import { gloveStock, type GloveStock } from '../db/schema';
import { transaction } from '../db/transaction';
import type { Actor } from './accounts';
import { audit } from './audit';
import { forbidden, isDuplicateKey, notFound, ServiceError } from './errors';
import { notifyManagers } from './notifications';

export type StockKind = Pick<GloveStock, 'material' | 'size' | 'thicknessMm' | 'hand'>;

export const describeKind = (k: StockKind) =>
	`${materialLabel[k.material]}, size ${k.size}, ${k.thicknessMm} mm, ${k.hand}`;

function mustManage(actor: Actor) {
	if (!hasRole(actor.role, 'manager')) throw forbidden('Only a manager keeps the glove stock.');
}

export async function listStock() {
	return db
		.select()
		.from(gloveStock)
		.orderBy(asc(gloveStock.material), asc(gloveStock.size), asc(gloveStock.hand));
}

export async function addStockKind(
	actor: Actor,
	input: StockKind & { quantity: number; minQuantity: number }
) {
	mustManage(actor);
	try {
		return await transaction(async (tx) => {
			const [row] = await tx.insert(gloveStock).values(input).$returningId();
			await audit(tx, {
				actorId: actor.id,
				action: 'glove_stock.added',
				entity: 'glove_stock',
				entityId: row.id,
				details: input
			});
			return row.id;
		});
	} catch (e) {
		if (isDuplicateKey(e))
			throw new ServiceError(409, 'That kind of glove is already on the list; change its count.');
		throw e;
	}
}

export async function updateStock(
	actor: Actor,
	id: number,
	input: { quantity: number; minQuantity: number },
	now = new Date()
) {
	mustManage(actor);
	await transaction(async (tx) => {
		// The row is updated below, so on a cluster the lock certifies as it is.
		const [row] = await tx.select().from(gloveStock).where(eq(gloveStock.id, id)).for('update');
		if (!row) throw notFound('That kind of spare glove');
		await tx.update(gloveStock).set(input).where(eq(gloveStock.id, id));
		await audit(tx, {
			actorId: actor.id,
			action: 'glove_stock.counted',
			entity: 'glove_stock',
			entityId: id,
			details: { from: row.quantity, ...input }
		});
		if (input.quantity <= input.minQuantity && input.quantity < row.quantity)
			await tellLow(tx, { ...row, ...input }, now);
	});
}

async function tellLow(tx: Transaction, row: GloveStock, now: Date) {
	await notifyManagers(
		`Spare gloves low: ${describeKind(row)}`,
		`${row.quantity} left on the shelf (minimum ${row.minQuantity}). Order more before the next change needs one.`,
		'/manage/gloves',
		`glove-stock:${row.id}:${now.getTime()}`,
		tx
	);
}

/** Takes one glove of the fitted kind from stock, in the caller's transaction. */
export async function takeFromStock(tx: Transaction, glove: FittedGlove, now: Date) {
	if (!glove.stockId) return;
	// The count is lowered below, so on a cluster the lock certifies as it is.
	const [row] = await tx
		.select()
		.from(gloveStock)
		.where(eq(gloveStock.id, glove.stockId))
		.for('update');
	if (!row) throw invalidStock('That kind of spare glove is not on the list.');
	if (
		row.material !== glove.material ||
		row.size !== glove.size ||
		Number(row.thicknessMm) !== glove.thicknessMm ||
		row.hand !== glove.hand
	)
		throw invalidStock(`The spare gloves chosen are ${describeKind(row)}: not the glove recorded.`);
	if (row.quantity < 1)
		throw new ServiceError(409, `No ${describeKind(row)} gloves are left in stock.`, {
			fields: { 'glove.stockId': 'None left.' }
		});
	await tx
		.update(gloveStock)
		.set({ quantity: sql`${gloveStock.quantity} - 1` })
		.where(and(eq(gloveStock.id, row.id)));
	if (row.quantity - 1 <= row.minQuantity)
		await tellLow(tx, { ...row, quantity: row.quantity - 1 }, now);
}

/** Puts back a glove taken from stock (its fitting was undone). */
export async function returnToStock(tx: Transaction, glove: FittedGlove | undefined) {
	if (!glove?.stockId) return;
	await tx
		.update(gloveStock)
		.set({ quantity: sql`${gloveStock.quantity} + 1` })
		.where(eq(gloveStock.id, glove.stockId));
}

function invalidStock(message: string) {
	return new ServiceError(400, message, { fields: { 'glove.stockId': message } });
}
