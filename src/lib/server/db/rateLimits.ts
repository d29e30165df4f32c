import { bigint, int, mysqlTable, varchar } from 'drizzle-orm/mysql-core';

/** The store of rate-limiter-flexible's RateLimiterMySQL (its own column layout). */
export const rateLimits = mysqlTable('rate_limits', {
	key: varchar({ length: 255 }).primaryKey(),
	points: int().notNull().default(0),
	expire: bigint({ mode: 'number', unsigned: true })
});
