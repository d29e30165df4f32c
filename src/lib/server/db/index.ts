import { building } from '$app/environment';
import { config } from '../config';
import { logger } from '../observability';
import { connect, type Database } from './connect';
import { countStatementsOn } from './statement-count';

// The build imports server modules to analyse them; it has no database.
const connection = building
	? null
	: connect(config.databaseUrl(), config.dbPoolSize, {
			syncWait: config.dbSyncWait,
			onSessionError: (err) =>
				logger.warn({ err }, 'a new database connection refused its session settings')
		});
// Tests only: each request's statements counted (server/count-statements.ts).
if (connection && config.countStatements) countStatementsOn(connection.pool);

export const db = connection?.db as Database;
export const pool = connection?.pool as ReturnType<typeof connect>['pool'];

export type Transaction = Parameters<Parameters<Database['transaction']>[0]>[0];
