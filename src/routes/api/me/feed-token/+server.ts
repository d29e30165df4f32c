import { json } from '@sveltejs/kit';
import { requireUser } from '$lib/server/guard';
import { feedUrls, newFeedToken } from '$lib/server/services/feeds';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	const user = requireUser(event);
	const token = await newFeedToken(user.id);
	return json({ token, userFeedUrl: feedUrls(event.url.origin, token).https }, { status: 201 });
};
