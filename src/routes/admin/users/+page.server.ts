import { fail } from '@sveltejs/kit';
import { requireRole } from '$lib/server/guard';
import { listUsers, setRole } from '$lib/server/services/accounts';
import { attempt } from '$lib/server/services/errors';
import { roleSchema } from '$lib/validation/account';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'admin');
	return { users: await listUsers() };
};

export const actions: Actions = {
	role: async (event) => {
		const actor = requireRole(event, 'admin');
		const parsed = roleSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { message: 'Choose a user and a role.' });
		const result = await attempt(() => setRole(actor, parsed.data.userId, parsed.data.role));
		if (!result.ok) return fail(result.error.status, { message: result.error.message });
		return { saved: parsed.data.userId };
	}
};
