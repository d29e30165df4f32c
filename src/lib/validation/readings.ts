import { z } from 'zod';
import { checkReading } from '$lib/domain/atmosphere';
import { isoDateTime } from './bookings';

const ppm = (label: string) =>
	z
		.number({ error: `${label} must be a number of ppm.` })
		.finite(`${label} must be a number of ppm.`);

export const readingSchema = z.object({
	at: isoDateTime('at').optional(),
	o2Ppm: ppm('O₂'),
	h2oPpm: ppm('H₂O'),
	note: z.string().trim().max(500, 'Use at most 500 characters.').optional()
});

/**
 * A reading typed into a form (a decimal comma is taken as a point): the values and a
 * field → message map, empty when the reading can be recorded.
 */
export function readingFromForm(values: Record<string, string>) {
	const number = (v: string | undefined) => (v?.trim() ? Number(v.replace(',', '.')) : Number.NaN);
	const reading = { o2Ppm: number(values.o2Ppm), h2oPpm: number(values.h2oPpm) };
	const errors: Record<string, string> = checkReading(reading);
	const note = (values.note ?? '').trim();
	if (note.length > 500) errors.note = 'Use at most 500 characters.';
	return { reading: { ...reading, note }, errors };
}
