import { runForm } from '$lib/server/forms';
import { requestPasswordReset } from '$lib/server/services/account-tokens';
import { setRetryAfter } from '$lib/server/rate-limit';
import { resetRequestSchema } from '$lib/validation/account';
import type { Actions } from './$types';

// Public: someone who cannot sign in asks for a link. The answer is the same for every
// well-formed address, known or not, so the form reveals no accounts; too many requests
// from one address or for one e-mail are refused alike, known or not.
export const actions: Actions = {
	default: async ({ request, getClientAddress, setHeaders }) => {
		const answer = await runForm(request, resetRequestSchema, async ({ email }) => {
			await requestPasswordReset(email, getClientAddress());
			return { requested: email };
		});
		setRetryAfter(setHeaders, answer);
		return answer;
	}
};
