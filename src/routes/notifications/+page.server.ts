import { requireUser } from '$lib/server/guard';
import { runForm } from '$lib/server/forms';
import { readListQuery } from '$lib/domain/listing';
import {
	markAllRead,
	markRead,
	notificationsList,
	notificationsPage,
	unreadCount
} from '$lib/server/services/notifications';
import { markAllReadSchema, markReadSchema } from '$lib/validation/notifications';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const [page, unread] = await Promise.all([
		notificationsPage(user.id, readListQuery(event.url.searchParams, notificationsList)),
		unreadCount(user.id)
	]);
	return { items: page.rows, view: page.view, unread };
};

export const actions: Actions = {
	/** One notice (or a few) marked read, as `POST /api/me/notifications/read` does. */
	read: async (event) => {
		const user = requireUser(event);
		return runForm(
			event.request,
			markReadSchema,
			async ({ ids }) => ({ unread: await markRead(user.id, ids) }),
			{ form: 'read', arrays: ['ids'] }
		);
	},
	readAll: async (event) => {
		const user = requireUser(event);
		return runForm(
			event.request,
			markAllReadSchema,
			async () => {
				await markAllRead(user.id);
				return { read: true };
			},
			{ form: 'readAll' }
		);
	}
};
