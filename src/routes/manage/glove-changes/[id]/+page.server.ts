import { error, fail } from '@sveltejs/kit';
import { z } from 'zod';
import { RECOMMENDED_FLUSH_CYCLES } from '$lib/domain/flush';
import {
	gloveChangeSteps,
	gloveHands,
	gloveMaterials,
	type GloveChangeStepKey
} from '$lib/domain/gloves';
import { requireRole } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { attempt } from '$lib/server/services/errors';
import {
	completeGloveChange,
	flushAfter,
	getGloveChange,
	recordStep
} from '$lib/server/services/gloves';
import { fieldErrors } from '$lib/validation/fields';
import type { Actions, PageServerLoad } from './$types';

const fittedSchema = z.object({
	material: z.enum(gloveMaterials, { error: 'Choose the material.' }),
	thicknessMm: z.coerce
		.number({ error: 'Give the thickness in mm.' })
		.min(0.1, 'At least 0.1 mm.')
		.max(3, 'At most 3 mm.'),
	size: z.string().trim().min(1, 'Give the size.').max(10),
	hand: z.enum(gloveHands, { error: 'Choose the hand.' }),
	turnedInsideOut: z.preprocess((v) => v === 'on', z.boolean())
});

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'manager');
	const found = await attempt(() => getGloveChange(idParam(event.params.id, 'The glove change')));
	if (!found.ok) error(404, { message: 'That glove change was not found.', code: 'not_found' });
	const g = found.value;
	return {
		...g,
		flushNow: flushAfter(g.box.volumeL, g.change.flushCycles),
		flushRecommended: flushAfter(g.box.volumeL, RECOMMENDED_FLUSH_CYCLES)
	};
};

export const actions: Actions = {
	step: async (event) => {
		const actor = requireRole(event, 'manager');
		const form = Object.fromEntries(await event.request.formData()) as Record<string, string>;
		const key = form.key as GloveChangeStepKey;
		if (!gloveChangeSteps.some((s) => s.key === key))
			return fail(400, { message: 'Unknown step.' });
		const result = await attempt(() =>
			recordStep(actor, idParam(event.params.id), key, {
				detail: form.detail?.slice(0, 300) || undefined
			})
		);
		if (!result.ok) return fail(result.error.status, { message: result.error.message });
		return { saved: key };
	},
	fitted: async (event) => {
		const actor = requireRole(event, 'manager');
		const parsed = fittedSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success)
			return fail(400, {
				message: 'Record every detail of the new glove.',
				errors: fieldErrors(parsed.error)
			});
		const result = await attempt(() =>
			recordStep(actor, idParam(event.params.id), 'new_glove_fitted', { newGlove: parsed.data })
		);
		if (!result.ok) return fail(result.error.status, { message: result.error.message });
		return { saved: 'new_glove_fitted' };
	},
	complete: async (event) => {
		const actor = requireRole(event, 'manager');
		const note = String((await event.request.formData()).get('overrideNote') ?? '').slice(0, 1000);
		const result = await attempt(() => completeGloveChange(actor, idParam(event.params.id), note));
		if (!result.ok) return fail(result.error.status, { message: result.error.message });
		return { completed: true };
	}
};
