import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { checkHumidityInput, humidity } from '$lib/domain/humidity';
import { requireUser } from '$lib/server/guard';
import { invalidInput, readJson } from '$lib/server/http';
import type { RequestHandler } from './$types';

const schema = z
	.object({
		frostPointC: z.number({ error: 'frostPointC must be a number of °C.' }).finite().optional(),
		ppmv: z.number({ error: 'ppmv must be a number.' }).finite().optional(),
		pressurePa: z.number({ error: 'pressurePa must be a number of pascals.' }).finite().optional()
	})
	.superRefine((v, ctx) => {
		if (v.frostPointC === undefined && v.ppmv === undefined)
			for (const key of ['frostPointC', 'ppmv'])
				ctx.addIssue({ code: 'custom', path: [key], message: 'Give frostPointC or ppmv.' });
		if (v.frostPointC !== undefined && v.ppmv !== undefined)
			ctx.addIssue({
				code: 'custom',
				path: ['ppmv'],
				message: 'Give frostPointC or ppmv, not both.'
			});
	});

export const POST: RequestHandler = async (event) => {
	requireUser(event);
	const input = await readJson(event.request, schema);
	const problems = checkHumidityInput(input);
	if (problems.length) {
		invalidInput(
			Object.fromEntries(problems.map((p) => [p.split(' ')[0], p])),
			'That frost point or water content cannot be.'
		);
	}
	return json(humidity(input));
};
