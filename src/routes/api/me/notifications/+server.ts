import { json } from '@sveltejs/kit';
import { isoInZone } from '$lib/domain/time';
import { config } from '$lib/server/config';
import { requireUser } from '$lib/server/guard';
import { notificationFeed } from '$lib/server/services/notifications';
import type { RequestHandler } from './$types';

/** The newest 50 notices, newest first, and how many are unread in all. */
export const GET: RequestHandler = async (event) => {
	const user = requireUser(event);
	const feed = await notificationFeed(user.id);
	return json({
		unread: feed.unread,
		items: feed.items.map(({ createdAt, ...n }) => ({
			...n,
			at: isoInZone(createdAt, config.facilityTz)
		}))
	});
};
