// Applies the committed drizzle-kit migrations in drizzle/ (safe to run twice).
import { drizzle } from 'drizzle-orm/mysql2';
import { migrate } from 'drizzle-orm/mysql2/migrator';
import mysql from 'mysql2/promise';

const url = process.env.DATABASE_URL;
if (!url) {
	console.error(
		'[boxwright] DATABASE_URL is not set; `npm start` sets it for the private MariaDB.'
	);
	process.exit(1);
}
const connection = await mysql.createConnection({ uri: url, multipleStatements: true });
await migrate(drizzle(connection), { migrationsFolder: 'drizzle' });
await connection.end();
console.log('[boxwright] database migrated');
