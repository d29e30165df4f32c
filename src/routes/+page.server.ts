import { requireUser } from '$lib/server/guard';
import { formId, runForm } from '$lib/server/forms';
import { dashboardFor } from '$lib/server/services/dashboard';
import { requestTraining } from '$lib/server/services/training-requests';
import { trainingRequestSchema } from '$lib/validation/training';
import type { Actions, PageServerLoad } from './$types';

// The shell's counts (approvals, bookings waiting, unread) come from the layout's one read.
export const load: PageServerLoad = async (event) => dashboardFor(requireUser(event));

export const actions: Actions = {
	/** "Request training" beside a module the person still needs. */
	request: async (event) => {
		const user = requireUser(event);
		const moduleId = formId((await event.request.clone().formData()).get('moduleId'));
		return runForm(
			event.request,
			trainingRequestSchema,
			async (input) => {
				await requestTraining(user, input);
				return { requested: input.moduleId };
			},
			{ form: `request-${moduleId}` }
		);
	}
};
