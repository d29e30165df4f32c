import { requireUser } from '$lib/server/guard';
import { markAllRead, notificationsOf } from '$lib/server/services/notifications';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	return { items: await notificationsOf(user.id) };
};

export const actions: Actions = {
	read: async (event) => {
		const user = requireUser(event);
		await markAllRead(user.id);
		return { read: true };
	}
};
