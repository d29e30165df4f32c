import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { runForm } from '$lib/server/forms';
import { requireRole } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { attempt } from '$lib/server/services/errors';
import {
	abandonGloveChange,
	completeGloveChange,
	gloveChangeView,
	recordStep,
	setGloveVolume,
	undoLastStep,
	type StepInput
} from '$lib/server/services/glove-changes';
import { listStock } from '$lib/server/services/glove-stock';
import {
	abandonSchema,
	completeSchema,
	fittedGloveSchema,
	gloveVolumeSchema,
	stepSchema
} from '$lib/validation/glove-changes';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'manager');
	const found = await attempt(() => gloveChangeView(idParam(event.params.id, 'The glove change')));
	if (!found.ok) error(404, { message: 'That glove change was not found.', code: 'not_found' });
	return { ...found.value, stock: await listStock() };
};

/** The manager and the change the action is for. */
function target(event: RequestEvent) {
	return {
		actor: requireRole(event, 'manager'),
		id: idParam(event.params.id, 'The glove change')
	};
}

// A skip always carries its reason, even a blank one, so a blank one is refused.
const skipSchema = z.preprocess((v) => ({ skipReason: '', ...(v as object) }), stepSchema);
// The fitting form holds the glove's own fields; the step is implied.
const fittingSchema = fittedGloveSchema.transform((glove): StepInput => ({
	step: 'new_glove_fitted',
	glove
}));

export const actions: Actions = {
	step: async (event) => {
		const { actor, id } = target(event);
		return runForm(
			event.request,
			stepSchema,
			(input) => recordStep(actor, id, input as StepInput),
			{
				form: 'step'
			}
		);
	},
	skip: async (event) => {
		const { actor, id } = target(event);
		return runForm(
			event.request,
			skipSchema,
			(input) => recordStep(actor, id, input as StepInput),
			{
				form: 'skip'
			}
		);
	},
	fitted: async (event) => {
		const { actor, id } = target(event);
		return runForm(event.request, fittingSchema, (input) => recordStep(actor, id, input), {
			form: 'fitted',
			booleans: ['turnedInsideOut']
		});
	},
	undo: async (event) => {
		const { actor, id } = target(event);
		return runForm(event.request, z.object({}), () => undoLastStep(actor, id), { form: 'undo' });
	},
	volume: async (event) => {
		const { actor, id } = target(event);
		return runForm(
			event.request,
			gloveVolumeSchema,
			(input) => setGloveVolume(actor, id, input.gloveVolumeL),
			{ form: 'volume' }
		);
	},
	complete: async (event) => {
		const { actor, id } = target(event);
		return runForm(
			event.request,
			completeSchema,
			(input) => completeGloveChange(actor, id, input),
			{
				form: 'complete',
				booleans: ['confirmHand']
			}
		);
	},
	abandon: async (event) => {
		const { actor, id } = target(event);
		return runForm(
			event.request,
			abandonSchema,
			(input) => abandonGloveChange(actor, id, input.reason),
			{ form: 'abandon' }
		);
	}
};
