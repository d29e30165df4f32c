// Tests only (COUNT_STATEMENTS=1): each answer says in `X-Statements` how many SQL statements
// its request sent, the session check and every load included, so a test can hold a page to
// its budget (tests/integration/dashboard-queries.test.ts). Off, the handle only passes the
// request on and the pool is not wrapped (db/index.ts).
import type { Handle } from '@sveltejs/kit';
import { config } from './config';
import { withStatementTally } from './db/statement-count';

export const STATEMENTS_HEADER = 'x-statements';

const counting: Handle = async ({ event, resolve }) => {
	const { result, count } = withStatementTally(() => resolve(event));
	const response = await result;
	try {
		response.headers.set(STATEMENTS_HEADER, String(count()));
		return response;
	} catch {
		// Immutable headers (a fetched response passed through): answer a copy.
		const copy = new Response(response.body, response);
		copy.headers.set(STATEMENTS_HEADER, String(count()));
		return copy;
	}
};

export const countStatements: Handle = config.countStatements
	? counting
	: ({ event, resolve }) => resolve(event);
