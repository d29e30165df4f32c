// A leak test's input: in SI units through the API (/api/calc/leak-rate and a box's
// leak-tests), in the units on the instruments through the form. Both end in the same
// domain check (domain/leak.ts, checkLeakTest).
import { z } from 'zod';
import { fieldMessages, numberFromText } from '$lib/domain/inputs';
import {
	checkLeakTest,
	leakInputFromReadings,
	readingFieldOf,
	type LeakReadings
} from '$lib/domain/leak';
import { finite, strictObject } from './calc';

const note = z.string().trim().max(500, 'Use at most 500 characters.').optional();

const oxygen = {
	method: z.literal('oxygen'),
	o2RisePpm: finite('o2RisePpm', 'ppm'),
	minutes: finite('minutes', 'minutes')
};
const temperaturesAndTime = {
	t1K: finite('t1K', 'kelvin'),
	t2K: finite('t2K', 'kelvin'),
	hours: finite('hours', 'hours')
};
const pressure = {
	method: z.literal('pressure'),
	p1Pa: finite('p1Pa', 'pascals'),
	p2Pa: finite('p2Pa', 'pascals'),
	...temperaturesAndTime
};
const gauge = {
	method: z.literal('gauge'),
	gauge1Pa: finite('gauge1Pa', 'pascals'),
	gauge2Pa: finite('gauge2Pa', 'pascals'),
	barometric1Pa: finite('barometric1Pa', 'pascals'),
	barometric2Pa: finite('barometric2Pa', 'pascals'),
	...temperaturesAndTime
};
const methodError = { error: 'method must be "oxygen", "pressure" or "gauge".' };

/**
 * The leak-rate calculation: `{method:"oxygen", o2RisePpm, minutes}`, `{method:"pressure",
 * p1Pa, p2Pa, t1K, t2K, hours}` (absolute) or `{method:"gauge", gauge1Pa, gauge2Pa,
 * barometric1Pa, barometric2Pa, t1K, t2K, hours}`.
 */
export const leakRateSchema = z.discriminatedUnion(
	'method',
	[strictObject(oxygen), strictObject(pressure), strictObject(gauge)],
	methodError
);

/** A leak test recorded against a box: the same, with a note. */
export const leakTestSchema = z.discriminatedUnion(
	'method',
	[
		strictObject({ ...oxygen, note }),
		strictObject({ ...pressure, note }),
		strictObject({ ...gauge, note })
	],
	methodError
);

/** A reading typed into the form: a decimal comma is fine; empty is NaN, refused by name. */
const reading = z
	.string()
	.optional()
	.transform((v) => numberFromText(v));

const readings = {
	o2RisePpm: reading,
	minutes: reading,
	gauge1Mbar: reading,
	gauge2Mbar: reading,
	baro1Mbar: reading,
	baro2Mbar: reading,
	t1C: reading,
	t2C: reading
} satisfies Partial<Record<keyof LeakReadings, typeof reading>>;

/**
 * The leak-test form, in mbar, °C and minutes (gauge and barometer, or the O2 rise), turned
 * into the SI input by the domain's one conversion and checked by the domain, each message
 * beside the reading it came from (t1K's beside t1C), as the /calc page shows them.
 */
export const leakTestFormSchema = z
	.object({
		method: z.enum(['oxygen', 'gauge'], { error: 'Choose a method.' }),
		...readings,
		note
	})
	.transform(({ method, note, ...r }) => ({
		method,
		input: leakInputFromReadings(method, r),
		note
	}))
	.superRefine(({ method, input }, ctx) => {
		const fields = fieldMessages(checkLeakTest(input), readingFieldOf(method));
		for (const [field, message] of Object.entries(fields))
			ctx.addIssue({ code: 'custom', path: [field], message });
	});
