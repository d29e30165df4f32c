import { requireUser } from '$lib/server/guard';
import { profile } from '$lib/server/services/accounts';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const me = await profile(user.id);
	return { group: me.group, leads: me.leads };
};
