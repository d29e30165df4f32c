import { json } from '@sveltejs/kit';
import { serve } from '$lib/server/api';
import { gloveChangeJson } from '$lib/server/glove-change-json';
import { requireRole } from '$lib/server/guard';
import { readJson } from '$lib/server/http';
import { idParam } from '$lib/server/params';
import { gloveChangeView, recordStep, type StepInput } from '$lib/server/services/glove-changes';
import { stepSchema } from '$lib/validation/glove-changes';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	const actor = requireRole(event, 'manager');
	const id = idParam(event.params.id, 'The glove change');
	const input = await readJson(event.request, stepSchema);
	await serve(() => recordStep(actor, id, input as StepInput));
	return json(gloveChangeJson(await serve(() => gloveChangeView(id))));
};
