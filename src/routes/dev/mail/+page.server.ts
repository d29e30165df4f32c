import { error } from '@sveltejs/kit';
import { requireRole } from '$lib/server/guard';
import { listSink } from '$lib/server/mail/sink';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'manager');
	const messages = await listSink();
	if (!messages) error(404, { message: 'No local mail sink runs here.', code: 'not_found' });
	return { messages };
};
