import { requireUser } from '$lib/server/guard';
import { formId, runForm } from '$lib/server/forms';
import { profile } from '$lib/server/services/accounts';
import { upcomingBookingsOf } from '$lib/server/services/calendar';
import { listBoxes } from '$lib/server/services/boxes';
import { certificationsOf } from '$lib/server/services/training';
import { modulesWithoutTrainers } from '$lib/server/services/training-modules';
import { openRequestsFor, requestTraining } from '$lib/server/services/training-requests';
import { hasRole } from '$lib/domain/roles';
import { dueTasks } from '$lib/server/services/maintenance';
import {
	failedMessages,
	firstBookingPath,
	groupsUsage,
	trainingNeeds
} from '$lib/server/services/dashboard';
import { trainingRequestSchema } from '$lib/validation/training';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const { user: shell } = await event.parent();
	const [me, mine, boxes, certs] = await Promise.all([
		profile(user.id),
		upcomingBookingsOf(user.id),
		listBoxes(),
		certificationsOf(user.id)
	]);
	const isManager = hasRole(user.role, 'manager');
	const isTrainer = hasRole(user.role, 'trainer');
	const [maintenance, failed, needs, led, path, requests, untaught] = await Promise.all([
		isManager ? dueTasks() : [],
		isManager ? failedMessages() : 0,
		isTrainer ? trainingNeeds(user.id) : null,
		shell?.isPi ? groupsUsage(user.id) : [],
		firstBookingPath(user.id, boxes, certs),
		isTrainer ? openRequestsFor(user) : [],
		isManager ? modulesWithoutTrainers() : []
	]);
	return {
		group: me.group,
		next: mine.slice(0, 5),
		boxes,
		maintenance,
		failed,
		needs,
		led,
		path,
		requests: requests.map((r) => ({
			id: r.id,
			userName: r.userName,
			moduleName: r.moduleName,
			note: r.note,
			at: r.createdAt
		})),
		untaught,
		// Held modules that are expiring, and ones that lapsed: both need a trainer.
		attention: certs
			.filter((c) => c.state === 'expiring' || c.state === 'expired')
			.map((c) => ({ module: c.moduleName, state: c.state, expiresAt: c.expiresAt }))
	};
};

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
