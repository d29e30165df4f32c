import { json } from '@sveltejs/kit';
import { z } from 'zod';
import {
	checkOxygenInput,
	checkPressureInput,
	isoClass,
	leakRateByOxygen,
	leakRateByPressure
} from '$lib/domain/leak';
import { requireUser } from '$lib/server/guard';
import { invalidInput, readJson } from '$lib/server/http';
import type { RequestHandler } from './$types';

const number = (field: string, unit: string) =>
	z.number({ error: `${field} must be a number of ${unit}.` }).finite();

const schema = z.discriminatedUnion(
	'method',
	[
		z.object({
			method: z.literal('oxygen'),
			o2RisePpm: number('o2RisePpm', 'ppm'),
			minutes: number('minutes', 'minutes')
		}),
		z.object({
			method: z.literal('pressure'),
			// Absolute pressures: gauge plus barometric.
			p1Pa: number('p1Pa', 'pascals'),
			p2Pa: number('p2Pa', 'pascals'),
			t1K: number('t1K', 'kelvin'),
			t2K: number('t2K', 'kelvin'),
			hours: number('hours', 'hours')
		})
	],
	{ error: 'method must be "oxygen" or "pressure".' }
);

export const POST: RequestHandler = async (event) => {
	requireUser(event);
	const input = await readJson(event.request, schema);
	const problems = input.method === 'oxygen' ? checkOxygenInput(input) : checkPressureInput(input);
	if (problems.length) {
		invalidInput(
			Object.fromEntries(problems.map((p) => [p.split(' ')[0], p])),
			'Those readings cannot be.'
		);
	}
	const hourlyLeakRate =
		input.method === 'oxygen' ? leakRateByOxygen(input) : leakRateByPressure(input);
	return json({ hourlyLeakRate, isoClass: isoClass(hourlyLeakRate) });
};
