import { error, fail } from '@sveltejs/kit';
import { z } from 'zod';
import { requireRole } from '$lib/server/guard';
import { refusedForm } from '$lib/server/forms';
import { idParam } from '$lib/server/params';
import { attempt, type ServiceError } from '$lib/server/services/errors';
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
import { fieldErrors } from '$lib/validation/fields';
import {
	abandonSchema,
	completeSchema,
	fromForm,
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

/**
 * Each action reads its form through the API's own schema, calls the service, and answers
 * with its name so the page shows the message where the form is.
 */
async function run<S extends z.ZodType>(
	event: RequestEvent,
	name: string,
	schema: S,
	values: Record<string, unknown>,
	call: (actor: ReturnType<typeof requireRole>, id: number, input: z.output<S>) => Promise<unknown>
) {
	const actor = requireRole(event, 'manager');
	const id = idParam(event.params.id, 'The glove change');
	const parsed = schema.safeParse(values);
	if (!parsed.success)
		return fail(400, {
			form: name,
			values,
			errors: fieldErrors(parsed.error),
			message: 'Please correct the fields marked below.'
		});
	const result = await attempt(() => call(actor, id, parsed.data));
	if (!result.ok) return refused(name, values, result.error);
	return { form: name, done: true };
}

/** A refusal in the form's place; completion's reasons come as a list. */
function refused(name: string, values: Record<string, unknown>, e: ServiceError) {
	const base = refusedForm(values, e);
	const reasons = (e.details as { reasons?: { code: string; message: string }[] } | undefined)
		?.reasons;
	return fail(base.status, { ...base.data, form: name, reasons: reasons ?? [] });
}

export const actions: Actions = {
	step: async (event) => {
		const values = fromForm(await event.request.formData());
		return run(event, 'step', stepSchema, values, (actor, id, input) =>
			recordStep(actor, id, input as StepInput)
		);
	},
	skip: async (event) => {
		const form = await event.request.formData();
		// A skip always carries its reason, even a blank one, so a blank one is refused.
		const values = { step: form.get('step'), skipReason: String(form.get('skipReason') ?? '') };
		return run(event, 'skip', stepSchema, values, (actor, id, input) =>
			recordStep(actor, id, input as StepInput)
		);
	},
	fitted: async (event) => {
		const glove = fromForm(await event.request.formData(), ['turnedInsideOut']);
		return run(
			event,
			'fitted',
			stepSchema,
			{ step: 'new_glove_fitted', glove },
			(actor, id, input) => recordStep(actor, id, input as StepInput)
		);
	},
	undo: async (event) =>
		run(event, 'undo', z.object({}), {}, (actor, id) => undoLastStep(actor, id)),
	volume: async (event) => {
		const values = fromForm(await event.request.formData());
		return run(event, 'volume', gloveVolumeSchema, values, (actor, id, input) =>
			setGloveVolume(actor, id, input.gloveVolumeL)
		);
	},
	complete: async (event) => {
		const values = fromForm(await event.request.formData(), ['confirmHand']);
		return run(event, 'complete', completeSchema, values, (actor, id, input) =>
			completeGloveChange(actor, id, input)
		);
	},
	abandon: async (event) => {
		const values = fromForm(await event.request.formData());
		return run(event, 'abandon', abandonSchema, values, (actor, id, input) =>
			abandonGloveChange(actor, id, input.reason)
		);
	}
};
