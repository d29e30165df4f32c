import { drizzle } from 'drizzle-orm/mysql2';
import mysql from 'mysql2/promise';
import * as schema from './schema';

/** One pool per process; scripts and the app both come through here. */
export function connect(url: string, connectionLimit = 10) {
	const pool = mysql.createPool({
		uri: url,
		connectionLimit,
		timezone: 'Z',
		// The booking service sends its lock and the reads it protects in one round trip.
		// Every value still goes through placeholders; nothing is spliced into SQL text.
		multipleStatements: true,
		supportBigNumbers: true
	});
	const db = drizzle(pool, { schema, mode: 'default', casing: 'snake_case' });
	return { pool, db };
}

export type Database = ReturnType<typeof connect>['db'];
