import { error } from '@sveltejs/kit';
import { requireUser } from '$lib/server/guard';
import { get } from '$lib/server/storage';
import type { RequestHandler } from './$types';

// Damage photos are for the facility's own people: anyone signed in, nobody else.
export const GET: RequestHandler = async (event) => {
	requireUser(event);
	const file = await get(`${event.params.folder}/${event.params.file}`);
	if (!file) error(404, { message: 'Not found.', code: 'not_found' });
	return new Response(file.bytes as BodyInit, {
		headers: {
			'content-type': file.type,
			'cache-control': 'private, max-age=3600',
			'x-content-type-options': 'nosniff'
		}
	});
};
