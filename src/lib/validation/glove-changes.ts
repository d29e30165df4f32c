// One reading of each glove-change command, for the API and the page's forms alike.
import { z } from 'zod';
import { gloveSizes, isStepKey, stepKeys } from '$lib/domain/glove-change';
import { gloveHands, gloveMaterials } from '$lib/domain/gloves';
import { isoDateTime } from './bookings';

const id = (what: string) =>
	z.coerce
		.number({ error: `Choose ${what}.` })
		.int(`Choose ${what}.`)
		.positive(`Choose ${what}.`);

export const fittedGloveSchema = z.strictObject({
	material: z.enum(gloveMaterials, { error: 'Choose the material.' }),
	size: z.enum(gloveSizes, { error: `Choose a size: ${gloveSizes.join(', ')}.` }),
	thicknessMm: z.coerce
		.number({ error: 'Give the thickness in mm.' })
		.min(0.1, 'At least 0.1 mm.')
		.max(3, 'At most 3 mm.'),
	hand: z.enum(gloveHands, { error: 'Choose the hand the glove was made for.' }),
	turnedInsideOut: z.boolean({ error: 'turnedInsideOut is true or false.' }).default(false),
	stockId: id('a kind of spare glove').nullish()
});

const reason = (what: string) =>
	z
		.string({ error: `Write ${what}.` })
		.trim()
		.min(3, `Write ${what} (at least 3 characters).`)
		.max(1000, 'Use at most 1,000 characters.');

export const startChangeSchema = z.strictObject({
	portId: id('a port'),
	expectedEnd: isoDateTime('expectedEnd').optional()
});

export const stepSchema = z
	.strictObject({
		step: z
			.string({ error: 'Name the step.' })
			.refine(isStepKey, { message: `Unknown step; the steps are ${stepKeys.join(', ')}.` }),
		skipReason: reason('why the step is skipped').optional(),
		glove: fittedGloveSchema.optional()
	})
	.refine((v) => v.step !== 'new_glove_fitted' || v.skipReason !== undefined || v.glove, {
		path: ['glove'],
		message: 'Record the new glove: material, size, thickness and hand.'
	});

export const completeSchema = z.strictObject({
	overrideReason: z.string().trim().max(1000, 'Use at most 1,000 characters.').optional(),
	confirmHand: z.boolean().optional()
});

export const abandonSchema = z.strictObject({ reason: reason('why the change is abandoned') });

export const gloveVolumeSchema = z.strictObject({
	gloveVolumeL: z.coerce
		.number({ error: 'Give the glove’s volume in litres.' })
		.min(0.2, 'At least 0.2 L.')
		.max(20, 'At most 20 L.')
});

export const previewSchema = z
	.strictObject({ start: isoDateTime('start'), end: isoDateTime('end') })
	.refine((v) => v.end > v.start, {
		path: ['end'],
		message: 'The expected end must be after the start.'
	});

/**
 * A form's fields in the API's shape: a checkbox is "on" or absent, an empty field is
 * absent, so the same schema reads both.
 */
export function fromForm(form: FormData, booleans: string[] = []): Record<string, unknown> {
	const out: Record<string, unknown> = {};
	for (const [key, value] of form.entries()) {
		if (typeof value !== 'string' || booleans.includes(key)) continue;
		if (value.trim() !== '') out[key] = value;
	}
	for (const key of booleans) if (form.has(key)) out[key] = form.get(key) === 'on';
	return out;
}

const count = (what: string) =>
	z.coerce
		.number({ error: `Give ${what} as a whole number.` })
		.int(`Give ${what} as a whole number.`)
		.min(0, `${what[0].toUpperCase()}${what.slice(1)} cannot be negative.`)
		.max(10_000, 'At most 10,000.');

export const stockCountSchema = z.strictObject({
	quantity: count('the number on the shelf'),
	minQuantity: count('the minimum')
});

export const stockKindSchema = z.strictObject({
	material: fittedGloveSchema.shape.material,
	size: fittedGloveSchema.shape.size,
	thicknessMm: fittedGloveSchema.shape.thicknessMm,
	hand: fittedGloveSchema.shape.hand,
	quantity: count('the number on the shelf'),
	minQuantity: count('the minimum')
});
