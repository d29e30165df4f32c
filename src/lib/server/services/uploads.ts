import { eq } from 'drizzle-orm';
import { hasRole } from '$lib/domain/roles';
import { db } from '../db';
import { gloveInspections } from '../db/schema';
import type { Actor } from './accounts';

/**
 * Whether /uploads may hand the actor the file stored under `key`. Only damage photos are
 * served there, and only to trainers, managers and admins and to whoever reported that damage;
 * any other key (a document, a photo whose report never saved) opens nothing. SOPs have their
 * own route, /documents/:id.
 */
export async function mayOpenUpload(actor: Actor, key: string): Promise<boolean> {
	// photo_key has no index: damage reports are few, and a photo is opened rarely.
	const [inspection] = await db
		.select({ byUserId: gloveInspections.byUserId })
		.from(gloveInspections)
		.where(eq(gloveInspections.photoKey, key))
		.limit(1);
	if (!inspection) return false;
	return hasRole(actor.role, 'trainer') || inspection.byUserId === actor.id;
}
