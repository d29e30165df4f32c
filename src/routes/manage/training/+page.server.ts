import { DateTime } from 'luxon';
import { config } from '$lib/server/config';
import { requireRole } from '$lib/server/guard';
import { runForm } from '$lib/server/forms';
import {
	certificationMatrix,
	createModule,
	grantCertification,
	listModules,
	modulesTaughtBy,
	revokeCertification
} from '$lib/server/services/training';
import { grantSchema, moduleSchema, revokeSchema } from '$lib/validation/training';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireRole(event, 'trainer');
	const [matrix, taught, modules] = await Promise.all([
		certificationMatrix(),
		modulesTaughtBy(user),
		listModules()
	]);
	return {
		matrix,
		taught,
		modules: modules.map((m) => ({ id: m.id, name: m.name })),
		trainers: matrix.rows.map((r) => ({ id: r.id, name: r.name })),
		today: DateTime.now().setZone(config.facilityTz).toISODate()!
	};
};

export const actions: Actions = {
	grant: async (event) => {
		const actor = requireRole(event, 'trainer');
		return runForm(
			event.request,
			grantSchema,
			async (grant) => {
				await grantCertification(actor, grant);
				return { granted: true };
			},
			{ form: 'grant' }
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
	}
};
