import { requireRole } from '$lib/server/guard';
import { runForm } from '$lib/server/forms';
import { closeMonthSchema } from '$lib/validation/groups';
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
		return runForm(event.request, closeMonthSchema, async ({ month }) => ({
			closed: await closeMonth(user, month)
		}));
	}
};
