import { fail, redirect } from '@sveltejs/kit';
import { hasRole } from '$lib/domain/roles';
import { requirePiOrRole } from '$lib/server/guard';
import { attempt } from '$lib/server/services/errors';
import { activePeople, groupsFor, saveGroup } from '$lib/server/services/groups';
import { fieldErrors } from '$lib/validation/fields';
import { groupSchema } from '$lib/validation/groups';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = await requirePiOrRole(event, 'manager');
	const groups = await groupsFor(user);
	if (!hasRole(user.role, 'manager') && groups.length === 1)
		redirect(303, `/groups/${groups[0].id}`);
	return {
		groups,
		people: hasRole(user.role, 'manager') ? await activePeople() : []
	};
};

export const actions: Actions = {
	create: async (event) => {
		const user = await requirePiOrRole(event, 'manager');
		const values = Object.fromEntries(await event.request.formData()) as Record<string, string>;
		const parsed = groupSchema.safeParse(values);
		if (!parsed.success)
			return fail(400, { values, errors: fieldErrors(parsed.error), message: undefined });
		const result = await attempt(() => saveGroup(user, parsed.data));
		if (!result.ok)
			return fail(result.error.status, {
				values,
				errors: (result.error.details as { fields?: Record<string, string> })?.fields ?? {},
				message: result.error.message
			});
		redirect(303, `/groups/${result.value}`);
	}
};
