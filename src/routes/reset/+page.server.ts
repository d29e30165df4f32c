import { runForm } from '$lib/server/forms';
import { requestPasswordReset } from '$lib/server/services/account-tokens';
import { resetRequestSchema } from '$lib/validation/account';
import type { Actions } from './$types';

// Public: someone who cannot sign in asks for a link. The answer is the same for every
// well-formed address, known or not, so the form reveals no accounts.
export const actions: Actions = {
	default: async ({ request }) =>
		runForm(request, resetRequestSchema, async ({ email }) => {
			await requestPasswordReset(email);
			return { requested: email };
		})
};
