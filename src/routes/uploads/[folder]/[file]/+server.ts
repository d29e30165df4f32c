import { error } from '@sveltejs/kit';
import { requireUser } from '$lib/server/guard';
import { mayOpenUpload } from '$lib/server/services/uploads';
import { get } from '$lib/server/storage';
import type { RequestHandler } from './$types';

// Damage photos go to trainers, managers and admins and to the person who reported the damage.
// Anyone else gets the same 404 as for a key that does not exist, so a key reveals nothing.
export const GET: RequestHandler = async (event) => {
	const user = requireUser(event);
	const key = `${event.params.folder}/${event.params.file}`;
	if (!(await mayOpenUpload(user, key))) error(404, { message: 'Not found.', code: 'not_found' });
	const file = await get(key);
	if (!file) error(404, { message: 'Not found.', code: 'not_found' });
	return new Response(file.bytes as BodyInit, {
		headers: {
			'content-type': file.type,
			'cache-control': 'private, max-age=3600',
			'x-content-type-options': 'nosniff',
			// Who may see a photo depends on the session: a browser shared by several people
			// must not hand one person's cached copy to the next.
			vary: 'cookie'
		}
	});
};
