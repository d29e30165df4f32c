import { config } from '$lib/server/config';
import { requireRole } from '$lib/server/guard';
import { errorResponse } from '$lib/server/http';
import type { RequestHandler } from './$types';

/**
 * Benchmarks only (BENCH_FLOOR=1, bench:booking): what any booking answer costs before the
 * database is asked anything: the hooks, the session check, the member guard, the body read
 * and a 409 in the contract's shape. Off, this route does not exist.
 */
export const POST: RequestHandler = async (event) => {
	if (!config.benchFloor) return errorResponse(404, 'Not found.');
	requireRole(event, 'member');
	await event.request.text();
	return errorResponse(409, 'Someone else holds that time on the box.');
};
