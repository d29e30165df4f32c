// A damage report on a fitted glove, as the port's damage page and the box's phone page
// read it (the port comes from the page's address or the port picked on the box face).
import { z } from 'zod';
import { damageLocations } from '$lib/domain/gloves';

export const damageReportSchema = z.strictObject({
	location: z.enum(damageLocations, { error: 'Where on the glove is the damage?' }),
	hand: z.enum(['left', 'right'], { error: 'Which hand’s glove?' }),
	// Typed on a phone it may come with a decimal comma ("2,5").
	holeSizeMm: z.preprocess(
		(v) => (typeof v === 'string' ? v.trim().replace(',', '.') : v),
		z.coerce
			.number({ error: 'Give the hole’s size in mm (your best estimate).' })
			.min(0, 'The size cannot be negative.')
			.max(1000, 'That is larger than any glove.')
	),
	notes: z.string().trim().max(1000).optional()
});

export type DamageReportInput = z.output<typeof damageReportSchema>;

/** The same report from the box's phone page, where the port is picked on the box face. */
export const portDamageSchema = damageReportSchema.extend({
	portId: z.coerce
		.number({ error: 'Tap the port whose glove is damaged.' })
		.int('Tap the port whose glove is damaged.')
		.positive('Tap the port whose glove is damaged.')
});
