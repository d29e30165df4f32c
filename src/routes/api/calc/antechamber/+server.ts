import { json } from '@sveltejs/kit';
import { antechamberEstimate, checkAntechamberInput } from '$lib/domain/antechamber';
import { fieldMessages } from '$lib/domain/inputs';
import { requireUser } from '$lib/server/guard';
import { invalidInput, readJson } from '$lib/server/http';
import { antechamberCalcSchema } from '$lib/validation/calc';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	requireUser(event);
	const input = await readJson(event.request, antechamberCalcSchema);
	const problems = checkAntechamberInput(input);
	if (problems.length)
		invalidInput(fieldMessages(problems), 'Those pressures or volumes cannot be.');
	return json(antechamberEstimate(input));
};
