import { fail } from '@sveltejs/kit';
import { DateTime } from 'luxon';
import { config } from '$lib/server/config';
import { requireRole } from '$lib/server/guard';
import { attempt } from '$lib/server/services/errors';
import {
	certificationMatrix,
	createModule,
	grantCertification,
	listModules,
	modulesTaughtBy,
	revokeCertification
} from '$lib/server/services/training';
import { grantSchema, moduleSchema, revokeSchema } from '$lib/validation/training';
import { fieldErrors } from '$lib/validation/fields';
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
		const raw = Object.fromEntries(await event.request.formData());
		const parsed = grantSchema.safeParse(raw);
		if (!parsed.success)
			return fail(400, {
				form: 'grant',
				errors: fieldErrors(parsed.error),
				message: 'Please correct the fields marked below.'
			});
		const result = await attempt(() => grantCertification(actor, parsed.data));
		if (!result.ok) {
			const details = result.error.details as { fields?: Record<string, string> } | undefined;
			return fail(result.error.status, {
				form: 'grant',
				errors: details?.fields ?? {},
				message: result.error.message
			});
		}
		return { form: 'grant', granted: true };
	},
	revoke: async (event) => {
		const actor = requireRole(event, 'trainer');
		const parsed = revokeSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success)
			return fail(400, {
				form: 'revoke',
				errors: fieldErrors(parsed.error),
				message: 'Say why the certification is revoked.'
			});
		const result = await attempt(() =>
			revokeCertification(actor, parsed.data.certificationId, parsed.data.reason)
		);
		if (!result.ok)
			return fail(result.error.status, {
				form: 'revoke',
				errors: {},
				message: result.error.message
			});
		return { form: 'revoke', revoked: true };
	},
	module: async (event) => {
		const actor = requireRole(event, 'manager');
		const form = await event.request.formData();
		const parsed = moduleSchema.safeParse({
			...Object.fromEntries(form),
			prerequisiteIds: form.getAll('prerequisiteIds'),
			trainerIds: form.getAll('trainerIds')
		});
		if (!parsed.success)
			return fail(400, {
				form: 'module',
				errors: fieldErrors(parsed.error),
				message: 'Please correct the fields marked below.'
			});
		const result = await attempt(() => createModule(actor, parsed.data));
		if (!result.ok) {
			const details = result.error.details as { fields?: Record<string, string> } | undefined;
			return fail(result.error.status, {
				form: 'module',
				errors: details?.fields ?? {},
				message: result.error.message
			});
		}
		return { form: 'module', created: true };
	}
};
