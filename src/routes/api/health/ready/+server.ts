import { json } from '@sveltejs/kit';
import { readiness } from '$lib/server/services/health';
import type { RequestHandler } from './$types';

/**
 * 200 with every check's numbers, or 503 with the same body plus the contract's `error`
 * naming the checks out of bounds (a load balancer needs only the status).
 */
export const GET: RequestHandler = async () => {
	const ready = await readiness();
	const headers = { 'cache-control': 'no-store' };
	if (ready.ok) return json(ready, { headers });
	return json(
		{
			...ready,
			error: {
				code: 'not_ready',
				message: `Not ready: ${ready.failed.join(', ')} out of bounds.`,
				details: { failed: ready.failed }
			}
		},
		{ status: 503, headers }
	);
};
