import { defineConfig } from 'drizzle-kit';

// `drizzle-kit generate` needs no database; migrations are applied by scripts/migrate.mjs.
export default defineConfig({
	schema: './src/lib/server/db/schema.ts',
	out: './drizzle',
	dialect: 'mysql',
	casing: 'snake_case',
	dbCredentials: { url: process.env.DATABASE_URL ?? 'mysql://localhost/boxwright' },
	strict: true,
	verbose: true
});
