// Standard operating procedures: PDFs attached to a box (managed by managers) or to a training
// module (by trainers and managers), stored through storage.ts, read by anyone signed in.
import { desc, eq, inArray } from 'drizzle-orm';
import { documentUrl, type DocumentSummary, type DocumentTarget } from '$lib/domain/documents';
import { hasRole } from '$lib/domain/roles';
import { db } from '../db';
import { boxes, documents, moduleTrainers, trainingModules, users } from '../db/schema';
import { checkDocument, get, put, remove } from '../storage';
import { documentFieldsSchema } from '$lib/validation/documents';
import { fieldErrors } from '$lib/validation/fields';
import type { Actor } from './accounts';
import { audit } from './audit';
import { forbidden, notFound, ServiceError } from './errors';
import { transaction } from '../db/transaction';

export const DOCUMENTS_FOLDER = 'documents';

const summary = {
	id: documents.id,
	title: documents.title,
	sizeBytes: documents.sizeBytes,
	uploadedAt: documents.uploadedAt,
	uploadedBy: users.name
};

const toSummary = <R extends Omit<DocumentSummary, 'url'>>(row: R): DocumentSummary => ({
	id: row.id,
	title: row.title,
	sizeBytes: row.sizeBytes,
	uploadedAt: row.uploadedAt,
	uploadedBy: row.uploadedBy,
	url: documentUrl(row.id)
});

/** A box's or a module's documents, newest first, with the uploader's name. */
export async function documentsFor(target: DocumentTarget): Promise<DocumentSummary[]> {
	const rows = await db
		.select(summary)
		.from(documents)
		.leftJoin(users, eq(users.id, documents.uploadedBy))
		.where(
			'boxId' in target
				? eq(documents.boxId, target.boxId)
				: eq(documents.moduleId, target.moduleId)
		)
		.orderBy(desc(documents.uploadedAt), desc(documents.id));
	return rows.map(toSummary);
}

/** The documents of several modules in one read (the training page), by module id. */
export async function documentsForModules(
	moduleIds: number[]
): Promise<Record<number, DocumentSummary[]>> {
	const byModule: Record<number, DocumentSummary[]> = {};
	for (const id of moduleIds) byModule[id] = [];
	if (!moduleIds.length) return byModule;
	const rows = await db
		.select({ ...summary, moduleId: documents.moduleId })
		.from(documents)
		.leftJoin(users, eq(users.id, documents.uploadedBy))
		.where(inArray(documents.moduleId, moduleIds))
		.orderBy(desc(documents.uploadedAt), desc(documents.id));
	for (const row of rows) if (row.moduleId !== null) byModule[row.moduleId]?.push(toSummary(row));
	return byModule;
}

/**
 * Whether the actor may add or remove documents there: managers anywhere; on a training
 * module also the trainers who teach it (as for granting its certifications).
 */
export function mayManageDocuments(actor: Pick<Actor, 'role'>, on: 'box' | 'module'): boolean {
	return hasRole(actor.role, on === 'box' ? 'manager' : 'trainer');
}

/** The modules whose documents the actor may manage: all for managers, those they teach for trainers. */
export async function modulesManagedBy(actor: Actor): Promise<Set<number> | 'all'> {
	if (hasRole(actor.role, 'manager')) return 'all';
	if (!hasRole(actor.role, 'trainer')) return new Set();
	const rows = await db
		.select({ moduleId: moduleTrainers.moduleId })
		.from(moduleTrainers)
		.where(eq(moduleTrainers.userId, actor.id));
	return new Set(rows.map((r) => r.moduleId));
}

async function assertMayManage(
	actor: Actor,
	on: { boxId?: number | null; moduleId?: number | null }
) {
	if (on.boxId !== undefined && on.boxId !== null) {
		if (hasRole(actor.role, 'manager')) return;
		throw forbidden('Only a manager can add or remove a box’s documents.');
	}
	const managed = await modulesManagedBy(actor);
	if (managed === 'all' || (on.moduleId != null && managed.has(on.moduleId))) return;
	throw forbidden(
		'Only a manager or a trainer who teaches this module can add or remove its documents.'
	);
}

export type DocumentUpload = { boxId?: number; moduleId?: number; title: string; file: File };

/** Checks and stores a PDF, then records it; the stored file is removed again if that fails. */
export async function addDocument(actor: Actor, input: DocumentUpload) {
	await assertMayManage(actor, { boxId: input.boxId, moduleId: input.moduleId });
	const parsed = documentFieldsSchema.safeParse({
		title: input.title,
		boxId: input.boxId,
		moduleId: input.moduleId
	});
	const fields = parsed.success ? {} : fieldErrors(parsed.error);
	if (!(input.file instanceof File)) fields.file = 'Choose a PDF file.';
	else if (input.file.size === 0) fields.file = 'That file is empty.';
	if (!parsed.success || fields.file) {
		throw new ServiceError(400, 'Some fields are not valid.', { fields });
	}
	const { title, boxId, moduleId } = parsed.data;

	if (boxId !== undefined) {
		const [box] = await db.select({ id: boxes.id }).from(boxes).where(eq(boxes.id, boxId));
		if (!box) throw notFound('The box');
	} else {
		const [module] = await db
			.select({ id: trainingModules.id })
			.from(trainingModules)
			.where(eq(trainingModules.id, moduleId!));
		if (!module) throw notFound('The training module');
	}

	const checked = await checkDocument(input.file);
	if (!checked.ok) {
		throw new ServiceError(400, checked.message, { fields: { file: checked.message } });
	}
	const storageKey = await put(DOCUMENTS_FOLDER, checked.bytes, checked.ext);
	const uploadedAt = new Date();
	try {
		const id = await transaction(async (tx) => {
			const [created] = await tx
				.insert(documents)
				.values({
					boxId: boxId ?? null,
					moduleId: moduleId ?? null,
					title,
					storageKey,
					sizeBytes: checked.bytes.byteLength,
					uploadedBy: actor.id,
					uploadedAt
				})
				.$returningId();
			await audit(tx, {
				actorId: actor.id,
				action: 'document.added',
				entity: 'document',
				entityId: created.id,
				details: { boxId, moduleId, title, sizeBytes: checked.bytes.byteLength }
			});
			return created.id;
		});
		return { id, title, sizeBytes: checked.bytes.byteLength, uploadedAt, url: documentUrl(id) };
	} catch (e) {
		// The box or module may have gone in the meantime; leave no file without a row.
		await remove(storageKey).catch((err) =>
			console.error(`[boxwright] could not remove ${storageKey} after a failed upload:`, err)
		);
		throw e;
	}
}

/** Deletes the record (with its audit entry), then the stored file. */
export async function removeDocument(actor: Actor, id: number) {
	const [doc] = await db.select().from(documents).where(eq(documents.id, id));
	if (!doc) throw notFound('The document');
	await assertMayManage(actor, { boxId: doc.boxId, moduleId: doc.moduleId });
	await transaction(async (tx) => {
		await tx.delete(documents).where(eq(documents.id, id));
		await audit(tx, {
			actorId: actor.id,
			action: 'document.removed',
			entity: 'document',
			entityId: id,
			details: { boxId: doc.boxId, moduleId: doc.moduleId, title: doc.title }
		});
	});
	// The record is gone, so nobody can reach the file any more; a store that fails to delete
	// leaves an orphan to clean up, not an error for the person who removed it.
	await remove(doc.storageKey).catch((err) =>
		console.error(`[boxwright] could not remove ${doc.storageKey} (document ${id}):`, err)
	);
}

/**
 * A document's bytes and title. Any signed-in user may read it: SOPs are the facility's own
 * procedures (only active accounts get a session, see auth.ts), so the actor is not checked.
 */
export async function openDocument(_actor: Actor, id: number) {
	const [doc] = await db
		.select({ title: documents.title, storageKey: documents.storageKey })
		.from(documents)
		.where(eq(documents.id, id));
	if (!doc) throw notFound('The document');
	const stored = await get(doc.storageKey);
	if (!stored || stored.type !== 'application/pdf') {
		console.error(`[boxwright] document ${id}: ${doc.storageKey} is missing from the store.`);
		throw notFound('The document');
	}
	return { bytes: stored.bytes, title: doc.title };
}
