import { json } from '@sveltejs/kit';
import { serve } from '$lib/server/api';
import { gloveChangeJson } from '$lib/server/glove-change-json';
import { requireRole } from '$lib/server/guard';
import { readJson } from '$lib/server/http';
import { idParam } from '$lib/server/params';
import { completeGloveChange, gloveChangeView } from '$lib/server/services/glove-changes';
import { completeSchema } from '$lib/validation/glove-changes';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	const actor = requireRole(event, 'manager');
	const id = idParam(event.params.id, 'The glove change');
	const input = await readJson(event.request, completeSchema);
	const { outageEnded } = await serve(() => completeGloveChange(actor, id, input));
	return json({ ...gloveChangeJson(await serve(() => gloveChangeView(id))), outageEnded });
};
