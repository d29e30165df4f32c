import { json } from '@sveltejs/kit';
import { serve } from '$lib/server/api';
import { gloveChangeJson } from '$lib/server/glove-change-json';
import { requireRole } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { gloveChangeView } from '$lib/server/services/glove-changes';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireRole(event, 'manager');
	const id = idParam(event.params.id, 'The glove change');
	return json(gloveChangeJson(await serve(() => gloveChangeView(id))));
};
