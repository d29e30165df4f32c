import { z } from 'zod';
import { checkReading } from '$lib/domain/atmosphere';
import { isoDateTime } from './bookings';

/** A number of ppm; typed into a form it may use a decimal comma. */
const ppm = z.preprocess(
	(v) => (typeof v === 'string' ? (v.trim() ? Number(v.replace(',', '.')) : undefined) : v),
	z.unknown()
);

const fields = {
	o2Ppm: ppm,
	h2oPpm: ppm,
	note: z.string().trim().max(500, 'Use at most 500 characters.').optional()
};

/** The domain decides what a possible reading is; its messages land on their fields. */
function possible<S extends z.ZodType<{ o2Ppm: unknown; h2oPpm: unknown }>>(schema: S) {
	return schema
		.superRefine((v, ctx) => {
			for (const [field, message] of Object.entries(checkReading(v)))
				ctx.addIssue({ code: 'custom', path: [field], message });
		})
		.transform((v) => ({ ...v, o2Ppm: v.o2Ppm as number, h2oPpm: v.h2oPpm as number }));
}

/** A reading, from the API or the box page's form. */
export const readingSchema = possible(
	z.strictObject({ at: isoDateTime('at').optional(), ...fields })
);

/** A reading taken at check-in or check-out: now, so no time of its own. */
export const checkReadingSchema = possible(z.strictObject(fields));
