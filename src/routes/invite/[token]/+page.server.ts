import { redirect } from '@sveltejs/kit';
import { endSession, startSession } from '$lib/server/auth';
import { runForm } from '$lib/server/forms';
import { acceptInvitation, linkMessages, linkState } from '$lib/server/services/account-tokens';
import { setPasswordSchema } from '$lib/validation/account';
import type { Actions, PageServerLoad } from './$types';

// Public: the invitation link itself is the permission.
export const load: PageServerLoad = async ({ params }) => {
	const link = await linkState('invite', params.token);
	return link.state === 'valid'
		? { state: link.state, name: link.name, email: link.email }
		: { state: link.state, problem: linkMessages[link.state] };
};

export const actions: Actions = {
	default: async ({ request, params, cookies, locals }) => {
		const answer = await runForm(request, setPasswordSchema, async ({ password }) => ({
			userId: await acceptInvitation(params.token, password)
		}));
		if (!('userId' in answer)) return answer;
		// They have just proved the address is theirs: signed in as themselves, not as
		// whoever used this browser before.
		await endSession(cookies, locals.session?.id);
		await startSession(cookies, answer.userId);
		redirect(303, '/');
	}
};
