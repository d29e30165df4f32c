import { asc } from 'drizzle-orm';
import { db } from '../db';
import { researchGroups } from '../db/schema';

/** Group names for the registration form (no PI or cost centre: that page is public). */
export async function listGroupNames() {
	return db
		.select({ id: researchGroups.id, name: researchGroups.name })
		.from(researchGroups)
		.orderBy(asc(researchGroups.name));
}
