import { error } from '@sveltejs/kit';
import { requireRole } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { attempt } from '$lib/server/services/errors';
import { outageDetail } from '$lib/server/services/outage-reads';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'manager');
	const found = await attempt(() => outageDetail(idParam(event.params.id, 'The outage')));
	if (!found.ok) error(404, { message: 'That outage was not found.', code: 'not_found' });
	return found.value;
};
