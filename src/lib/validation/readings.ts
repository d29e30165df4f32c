import { z } from 'zod';
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
