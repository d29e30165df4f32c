import { redirect } from '@sveltejs/kit';
import { runForm } from '$lib/server/forms';
import { register } from '$lib/server/services/accounts';
import { listGroupNames } from '$lib/server/services/groups';
import { setRetryAfter } from '$lib/server/rate-limit';
import { registerSchema } from '$lib/validation/account';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals }) => {
	if (locals.user) redirect(303, '/');
	return { groups: await listGroupNames() };
};

export const actions: Actions = {
	default: async ({ request, getClientAddress, setHeaders }) => {
		const answer = await runForm(request, registerSchema, async (input) => ({
			registered: await register(input, getClientAddress())
		}));
		if ('registered' in answer) redirect(303, '/signin?registered=1');
		setRetryAfter(setHeaders, answer);
		return answer;
	}
};
