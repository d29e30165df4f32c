import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { antechamberEstimate, checkAntechamberInput } from '$lib/domain/antechamber';
import { requireUser } from '$lib/server/guard';
import { invalidInput, readJson } from '$lib/server/http';
import type { RequestHandler } from './$types';

const number = (field: string, unit: string) =>
	z.number({ error: `${field} must be a number of ${unit}.` }).finite();

const schema = z.object({
	lowPa: number('lowPa', 'pascals'),
	highPa: number('highPa', 'pascals'),
	cycles: z
		.number({ error: 'cycles must be a whole number.' })
		.int('cycles must be a whole number.')
		.optional(),
	targetPpm: number('targetPpm', 'ppm').optional(),
	volumeL: number('volumeL', 'litres').max(100_000, 'volumeL is implausibly large.').optional(),
	pumpM3PerH: number('pumpM3PerH', 'm³/h').optional()
});

export const POST: RequestHandler = async (event) => {
	requireUser(event);
	const input = await readJson(event.request, schema);
	const problems = checkAntechamberInput(input);
	if (problems.length) {
		invalidInput(
			Object.fromEntries(problems.map((p) => [p.split(' ')[0], p])),
			'Those pressures or volumes cannot be.'
		);
	}
	return json(antechamberEstimate(input));
};
