import { z } from 'zod';

/** A group as a manager edits it. */
export const groupSchema = z.object({
	name: z
		.string()
		.trim()
		.min(2, 'Name the group (2–120 characters).')
		.max(120, 'Use at most 120 characters.'),
	costCentre: z
		.string()
		.trim()
		.min(1, 'Give the cost-centre code the facility bills.')
		.max(40, 'Use at most 40 characters.'),
	piUserId: z.preprocess(
		(v) => (v === '' || v === undefined ? null : Number(v)),
		z.number().int().positive().nullable()
	),
	external: z.preprocess((v) => v === 'on', z.boolean())
});
