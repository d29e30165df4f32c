import { requireUser } from '$lib/server/guard';
import { listBoxes } from '$lib/server/services/boxes';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireUser(event);
	return { boxes: await listBoxes() };
};
