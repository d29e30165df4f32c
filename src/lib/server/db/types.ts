import { customType } from 'drizzle-orm/mysql-core';

/**
 * JSON column. MariaDB's JSON is LONGTEXT underneath, so mysql2 hands back a string;
 * drizzle's own json() would pass that string through unparsed.
 */
export const json = customType<{ data: unknown; driverData: string }>({
	dataType: () => 'json',
	toDriver: (value) => JSON.stringify(value),
	fromDriver: (value) => (typeof value === 'string' ? JSON.parse(value) : value)
});
