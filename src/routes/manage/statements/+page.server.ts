import { fail } from '@sveltejs/kit';
import { requireRole } from '$lib/server/guard';
import { attempt } from '$lib/server/services/errors';
import { groupsFor } from '$lib/server/services/groups';
import { closeMonth, recentMonths } from '$lib/server/services/statements';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireRole(event, 'manager');
	return { months: await recentMonths(), groups: await groupsFor(user) };
};

export const actions: Actions = {
	close: async (event) => {
		const user = requireRole(event, 'manager');
		const month = String((await event.request.formData()).get('month') ?? '');
		const result = await attempt(() => closeMonth(user, month));
		if (!result.ok) return fail(result.error.status, { message: result.error.message });
		return { closed: result.value };
	}
};
