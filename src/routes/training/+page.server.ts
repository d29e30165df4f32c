import { requireUser } from '$lib/server/guard';
import { formId, runForm } from '$lib/server/forms';
import { certificationsOf, listModules } from '$lib/server/services/training';
import {
	openRequestsOf,
	requestTraining,
	withdrawRequest
} from '$lib/server/services/training-requests';
import { documentsForModules, modulesManagedBy } from '$lib/server/services/documents';
import { trainingRequestSchema, withdrawRequestSchema } from '$lib/validation/training';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const [mine, modules, requests] = await Promise.all([
		certificationsOf(user.id),
		listModules(),
		openRequestsOf(user.id)
	]);
	return {
		mine,
		modules: modules.map((m) => ({
			id: m.id,
			description: m.description,
			prerequisites: m.prerequisites.map((p) => p.name),
			trainers: m.trainers.map((t) => t.name)
		})),
		requests: requests.map((r) => ({ id: r.id, moduleId: r.moduleId, at: r.createdAt })),
		documents: await documentsForModules(modules.map((m) => m.id)),
		managedModules: await modulesManagedBy(user).then((m) => (m === 'all' ? 'all' : [...m]))
	};
};

/** The module a form is about, to give each module's form only its own answer. */
const moduleOf = async (request: Request) =>
	formId((await request.clone().formData()).get('moduleId'));

export const actions: Actions = {
	request: async (event) => {
		const user = requireUser(event);
		const moduleId = await moduleOf(event.request);
		return runForm(
			event.request,
			trainingRequestSchema,
			async (input) => {
				await requestTraining(user, input);
				return { requested: input.moduleId };
			},
			{ form: `request-${moduleId}` }
		);
	},
	withdraw: async (event) => {
		const user = requireUser(event);
		const moduleId = await moduleOf(event.request);
		return runForm(
			event.request,
			withdrawRequestSchema,
			async ({ requestId }) => {
				await withdrawRequest(user, requestId);
				return { withdrawn: true };
			},
			{ form: `request-${moduleId}`, omit: ['moduleId'] }
		);
	}
};
