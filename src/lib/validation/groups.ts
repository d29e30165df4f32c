import { z } from 'zod';

/** A group as a manager edits it. */
export const groupSchema = z.object({
	name: z
		.string({ error: 'Name the group (2–120 characters).' })
		.trim()
		.min(2, 'Name the group (2–120 characters).')
		.max(120, 'Use at most 120 characters.'),
	costCentre: z
		.string({ error: 'Give the cost-centre code the facility bills.' })
		.trim()
		.min(1, 'Give the cost-centre code the facility bills.')
		.max(40, 'Use at most 40 characters.'),
	piUserId: z.preprocess(
		(v) => (v === '' || v === undefined || v === null ? null : Number(v)),
		z.number({ error: 'Choose the PI from the list.' }).int().positive().nullable()
	),
	external: z.boolean().default(false)
});

const userId = z.coerce.number({ error: 'Choose a person.' }).int().positive('Choose a person.');

/** A membership decision or removal on a group page. */
export const memberSchema = z.strictObject({ userId });

/** Closing a month's statements (YYYY-MM). */
export const closeMonthSchema = z.strictObject({
	month: z.string({ error: 'Choose a month.' }).regex(/^\d{4}-\d{2}$/, 'Choose a month.')
});
