// What the health check asks: the app answers only when its database does.
import { sql } from 'drizzle-orm';
import { db } from '../db';

/** Resolves once the database answers a trivial query; rejects when it cannot. */
export async function checkDatabase(): Promise<void> {
	await db.execute(sql`SELECT 1`);
}
