import { json } from '@sveltejs/kit';
import { serve } from '$lib/server/api';
import { boxJson } from '$lib/server/box-json';
import { config } from '$lib/server/config';
import { requireUser } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { getBox } from '$lib/server/services/boxes';
import { glovesOfBox } from '$lib/server/services/gloves';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireUser(event);
	const id = idParam(event.params.id, 'The box');
	const { summary } = await serve(() => getBox(id));
	return json({ box: boxJson(summary, await glovesOfBox(id), config.facilityTz) });
};
