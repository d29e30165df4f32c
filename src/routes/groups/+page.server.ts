import { redirect } from '@sveltejs/kit';
import { hasRole } from '$lib/domain/roles';
import { requirePiOrRole } from '$lib/server/guard';
import { runForm } from '$lib/server/forms';
import { listInMemory, readListQuery } from '$lib/domain/listing';
import { activePeople, groupsFor, groupsList, saveGroup } from '$lib/server/services/groups';
import { groupSchema } from '$lib/validation/groups';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = await requirePiOrRole(event, 'manager');
	const groups = await groupsFor(user);
	if (!hasRole(user.role, 'manager') && groups.length === 1)
		redirect(303, `/groups/${groups[0].id}`);
	const list = listInMemory(groups, readListQuery(event.url.searchParams, groupsList), {
		sortBy: { name: (g) => g.name, pi: (g) => g.piName, costCentre: (g) => g.costCentre },
		text: (g) => `${g.name} ${g.piName ?? ''} ${g.costCentre}`,
		filter: { rates: (g, v) => (v === 'external') === g.external }
	});
	return {
		groups: list.rows,
		view: list.view,
		people: hasRole(user.role, 'manager') ? await activePeople() : []
	};
};

export const actions: Actions = {
	create: async (event) => {
		const user = await requirePiOrRole(event, 'manager');
		const answer = await runForm(
			event.request,
			groupSchema,
			async (group) => ({ id: await saveGroup(user, group) }),
			{ booleans: ['external'] }
		);
		if ('id' in answer) redirect(303, `/groups/${answer.id}`);
		return answer;
	}
};
