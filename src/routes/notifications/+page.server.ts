import { requireUser } from '$lib/server/guard';
import { runForm } from '$lib/server/forms';
import { markAllRead, markRead, notificationsOf } from '$lib/server/services/notifications';
import { markAllReadSchema, markReadSchema } from '$lib/validation/notifications';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	return { items: await notificationsOf(user.id) };
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
