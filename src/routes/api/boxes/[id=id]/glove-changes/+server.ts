import { json } from '@sveltejs/kit';
import { serve } from '$lib/server/api';
import { requireRole } from '$lib/server/guard';
import { readJson } from '$lib/server/http';
import { idParam } from '$lib/server/params';
import { startGloveChange } from '$lib/server/services/glove-change-start';
import { startChangeSchema } from '$lib/validation/glove-changes';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	const actor = requireRole(event, 'manager');
	const boxId = idParam(event.params.id, 'The box');
	const input = await readJson(event.request, startChangeSchema);
	return json(await serve(() => startGloveChange(actor, boxId, input)), { status: 201 });
};
