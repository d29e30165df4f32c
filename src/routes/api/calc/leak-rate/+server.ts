import { json } from '@sveltejs/kit';
import { isoClass } from '$lib/domain/leak';
import { serve } from '$lib/server/api';
import { requireUser } from '$lib/server/guard';
import { readJson } from '$lib/server/http';
import { evaluate } from '$lib/server/services/leak-tests';
import { leakTestSchema } from '$lib/validation/leak-tests';
import type { RequestHandler } from './$types';

/**
 * The leak test's own computation, without saving it: `{method:"oxygen", o2RisePpm, minutes}`,
 * `{method:"pressure", p1Pa, p2Pa, t1K, t2K, hours}` (absolute) or `{method:"gauge", …}`.
 */
export const POST: RequestHandler = async (event) => {
	requireUser(event);
	const input = await readJson(event.request, leakTestSchema);
	const { rate } = await serve(async () => evaluate(input));
	return json({ hourlyLeakRate: rate, isoClass: isoClass(rate) });
};
