import { json } from '@sveltejs/kit';
import { serve } from '$lib/server/api';
import { gloveChangeJson } from '$lib/server/glove-change-json';
import { requireRole } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { gloveChangeView, undoLastStep } from '$lib/server/services/glove-changes';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	const actor = requireRole(event, 'manager');
	const id = idParam(event.params.id, 'The glove change');
	await serve(() => undoLastStep(actor, id));
	return json(gloveChangeJson(await serve(() => gloveChangeView(id))));
};
