import type { Database } from '../db/connect';
import type { Transaction } from '../db';
import { auditLog } from '../db/schema';

export type AuditEntry = {
	actorId: number | null;
	action: string;
	entity: string;
	entityId: string | number;
	details?: Record<string, unknown>;
};

/** Records an action; pass the transaction so the entry commits with the change. */
export async function audit(tx: Database | Transaction, entry: AuditEntry) {
	await tx.insert(auditLog).values({
		actorId: entry.actorId,
		action: entry.action,
		entity: entry.entity,
		entityId: String(entry.entityId),
		details: entry.details ?? null
	});
}
