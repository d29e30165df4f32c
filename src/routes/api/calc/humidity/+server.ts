import { json } from '@sveltejs/kit';
import { checkHumidityInput, humidity } from '$lib/domain/humidity';
import { fieldMessages } from '$lib/domain/inputs';
import { requireUser } from '$lib/server/guard';
import { invalidInput, readJson } from '$lib/server/http';
import { humidityCalcSchema } from '$lib/validation/calc';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	requireUser(event);
	const input = await readJson(event.request, humidityCalcSchema);
	const problems = checkHumidityInput(input);
	if (problems.length)
		invalidInput(fieldMessages(problems), 'That frost point or water content cannot be.');
	return json(humidity(input));
};
