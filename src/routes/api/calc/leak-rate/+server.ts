import { json } from '@sveltejs/kit';
import { fieldMessages } from '$lib/domain/inputs';
import { checkLeakTest, evaluateLeakTest } from '$lib/domain/leak';
import { requireUser } from '$lib/server/guard';
import { invalidInput, readJson } from '$lib/server/http';
import { leakRateSchema } from '$lib/validation/leak-tests';
import type { RequestHandler } from './$types';

/**
 * A leak test's computation, without saving it: `{method:"oxygen", o2RisePpm, minutes}`,
 * `{method:"pressure", p1Pa, p2Pa, t1K, t2K, hours}` (absolute) or `{method:"gauge", …}`.
 */
export const POST: RequestHandler = async (event) => {
	requireUser(event);
	const input = await readJson(event.request, leakRateSchema);
	const problems = checkLeakTest(input);
	if (problems.length) invalidInput(fieldMessages(problems), 'Those readings cannot be.');
	const { hourlyLeakRate, isoClass } = evaluateLeakTest(input);
	return json({ hourlyLeakRate, isoClass });
};
