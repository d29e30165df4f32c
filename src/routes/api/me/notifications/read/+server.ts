import { json } from '@sveltejs/kit';
import { requireUser } from '$lib/server/guard';
import { readJson } from '$lib/server/http';
import { markRead } from '$lib/server/services/notifications';
import { markReadSchema } from '$lib/validation/notifications';
import type { RequestHandler } from './$types';

/** Marks one's own notices read; ids of anyone else's change nothing. */
export const POST: RequestHandler = async (event) => {
	const user = requireUser(event);
	const { ids } = await readJson(event.request, markReadSchema);
	return json({ unread: await markRead(user.id, ids) });
};
