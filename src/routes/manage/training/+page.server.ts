import { DateTime } from 'luxon';
import { hasRole } from '$lib/domain/roles';
import { config } from '$lib/server/config';
import { requireRole } from '$lib/server/guard';
import { formId, runForm } from '$lib/server/forms';
import {
	certificationMatrix,
	grantCertification,
	listModules,
	matrixList,
	revokeCertification
} from '$lib/server/services/training';
import { listInMemory, readListQuery } from '$lib/domain/listing';
import {
	createModule,
	modulesTaughtBy,
	modulesWithoutTrainers,
	trainerCandidates,
	updateModule
} from '$lib/server/services/training-modules';
import { declineRequest, openRequestsFor } from '$lib/server/services/training-requests';
import {
	declineRequestSchema,
	grantSchema,
	moduleSchema,
	revokeSchema
} from '$lib/validation/training';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireRole(event, 'trainer');
	const isManager = hasRole(user.role, 'manager');
	const [matrix, taught, modules, trainers, requests, untaught] = await Promise.all([
		certificationMatrix(),
		modulesTaughtBy(user),
		listModules(),
		isManager ? trainerCandidates() : [],
		openRequestsFor(user),
		isManager ? modulesWithoutTrainers() : []
	]);
	const people = listInMemory(matrix.rows, readListQuery(event.url.searchParams, matrixList), {
		sortBy: { name: (r) => r.name, email: (r) => r.email },
		text: (r) => `${r.name} ${r.email}`,
		filter: { holds: (r, state) => r.cells.some((c) => c.state === state) }
	});
	return {
		matrix: { modules: matrix.modules, rows: people.rows },
		matrixView: people.view,
		// Everyone may be certified, whichever page of the matrix is shown.
		people: matrix.rows.map((r) => ({ id: r.id, name: r.name })),
		taught,
		modules: modules.map((m) => ({
			id: m.id,
			name: m.name,
			description: m.description ?? '',
			validityMonths: m.validityMonths,
			prerequisiteIds: m.prerequisites.map((p) => p.id),
			prerequisites: m.prerequisites.map((p) => p.name),
			trainerIds: m.trainers.map((t) => t.id),
			trainers: m.trainers.map((t) => t.name)
		})),
		trainers,
		requests: requests.map((r) => ({
			id: r.id,
			userId: r.userId,
			userName: r.userName,
			moduleId: r.moduleId,
			moduleName: r.moduleName,
			note: r.note,
			at: r.createdAt
		})),
		untaught: untaught.map((m) => m.id),
		editing: isManager ? formId(event.url.searchParams.get('edit')) || null : null,
		today: DateTime.now().setZone(config.facilityTz).toISODate()!
	};
};

/** A record id the form carries besides its schema's fields, to name its answer. */
const posted = async (request: Request, field: string) =>
	formId((await request.clone().formData()).get(field));

export const actions: Actions = {
	grant: async (event) => {
		const actor = requireRole(event, 'trainer');
		// Granted from a request's row, the answer goes to that row; else to the form.
		const requestId = await posted(event.request, 'requestId');
		return runForm(
			event.request,
			grantSchema,
			async (grant) => {
				await grantCertification(actor, grant);
				return { granted: true };
			},
			{ form: requestId ? `request-${requestId}` : 'grant', omit: ['requestId'] }
		);
	},
	decline: async (event) => {
		const actor = requireRole(event, 'trainer');
		const requestId = await posted(event.request, 'requestId');
		return runForm(
			event.request,
			declineRequestSchema,
			async (input) => {
				await declineRequest(actor, input);
				return { declined: true };
			},
			{ form: `request-${requestId}` }
		);
	},
	revoke: async (event) => {
		const actor = requireRole(event, 'trainer');
		return runForm(
			event.request,
			revokeSchema,
			async ({ certificationId, reason }) => {
				await revokeCertification(actor, certificationId, reason);
				return { revoked: true };
			},
			{ form: 'revoke' }
		);
	},
	module: async (event) => {
		const actor = requireRole(event, 'manager');
		return runForm(
			event.request,
			moduleSchema,
			async (module) => {
				await createModule(actor, module);
				return { created: true };
			},
			{ form: 'module', arrays: ['prerequisiteIds', 'trainerIds'] }
		);
	},
	edit: async (event) => {
		const actor = requireRole(event, 'manager');
		const moduleId = await posted(event.request, 'moduleId');
		return runForm(
			event.request,
			moduleSchema,
			async (module) => {
				await updateModule(actor, moduleId, module);
				return { saved: true };
			},
			{ form: `edit-${moduleId}`, arrays: ['prerequisiteIds', 'trainerIds'], omit: ['moduleId'] }
		);
	}
};
