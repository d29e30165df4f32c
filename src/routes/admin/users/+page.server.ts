import { requireRole } from '$lib/server/guard';
import { listUsers, setRole } from '$lib/server/services/accounts';
import { runForm } from '$lib/server/forms';
import { roleSchema } from '$lib/validation/account';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'admin');
	return { users: await listUsers() };
};

export const actions: Actions = {
	role: async (event) => {
		const actor = requireRole(event, 'admin');
		return runForm(event.request, roleSchema, async ({ userId, role }) => {
			await setRole(actor, userId, role);
			return { saved: userId };
		});
	}
};
