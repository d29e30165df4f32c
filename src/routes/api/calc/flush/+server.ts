import { json } from '@sveltejs/kit';
import { checkFlushInput, flushEstimate } from '$lib/domain/flush';
import { fieldMessages } from '$lib/domain/inputs';
import { requireUser } from '$lib/server/guard';
import { invalidInput, readJson } from '$lib/server/http';
import { flushCalcSchema } from '$lib/validation/calc';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	requireUser(event);
	const input = await readJson(event.request, flushCalcSchema);
	const problems = checkFlushInput(input);
	if (problems.length) invalidInput(fieldMessages(problems), 'Those volumes cannot be.');
	return json(flushEstimate(input));
};
