import { json } from '@sveltejs/kit';
import { serve } from '$lib/server/api';
import { gloveChangeJson } from '$lib/server/glove-change-json';
import { requireRole } from '$lib/server/guard';
import { readJson } from '$lib/server/http';
import { idParam } from '$lib/server/params';
import { abandonGloveChange, gloveChangeView } from '$lib/server/services/glove-changes';
import { abandonSchema } from '$lib/validation/glove-changes';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	const actor = requireRole(event, 'manager');
	const id = idParam(event.params.id, 'The glove change');
	const { reason } = await readJson(event.request, abandonSchema);
	await serve(() => abandonGloveChange(actor, id, reason));
	return json(gloveChangeJson(await serve(() => gloveChangeView(id))));
};
