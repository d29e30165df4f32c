import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { checkFlushInput, flushEstimate } from '$lib/domain/flush';
import { requireUser } from '$lib/server/guard';
import { invalidInput, readJson } from '$lib/server/http';
import type { RequestHandler } from './$types';

const litres = (field: string) =>
	z
		.number({ error: `${field} must be a number of litres.` })
		.finite()
		.max(100_000, `${field} is implausibly large.`);

const schema = z.object({
	boxVolumeL: litres('boxVolumeL'),
	gloveVolumeL: litres('gloveVolumeL'),
	residualVolumeL: litres('residualVolumeL'),
	cycles: z
		.number({ error: 'cycles must be a whole number.' })
		.int('cycles must be a whole number.')
});

export const POST: RequestHandler = async (event) => {
	requireUser(event);
	const input = await readJson(event.request, schema);
	const problems = checkFlushInput(input);
	if (problems.length) {
		invalidInput(
			Object.fromEntries(problems.map((p) => [p.split(' ')[0], p])),
			'Those volumes cannot be.'
		);
	}
	return json(flushEstimate(input));
};
