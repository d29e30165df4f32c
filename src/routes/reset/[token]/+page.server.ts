import { endSession } from '$lib/server/auth';
import { runForm } from '$lib/server/forms';
import { linkMessages, linkState, resetPassword } from '$lib/server/services/account-tokens';
import { setPasswordSchema } from '$lib/validation/account';
import type { Actions, PageServerLoad } from './$types';

// Public: the link itself is the permission. Only whose account it opens is shown.
export const load: PageServerLoad = async ({ params }) => {
	const link = await linkState('reset', params.token);
	return link.state === 'valid'
		? { state: link.state, name: link.name }
		: { state: link.state, problem: linkMessages[link.state] };
};

export const actions: Actions = {
	default: async ({ request, params, cookies, locals }) => {
		const answer = await runForm(request, setPasswordSchema, async ({ password }) => {
			await resetPassword(params.token, password);
			return { done: true as const };
		});
		// Every session of the person has ended; this browser's cookie goes too.
		if ('done' in answer) await endSession(cookies, locals.session?.id);
		return answer;
	}
};
