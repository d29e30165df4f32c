import { fail, redirect } from '@sveltejs/kit';
import { attempt } from '$lib/server/services/errors';
import { register } from '$lib/server/services/accounts';
import { listGroupNames } from '$lib/server/services/groups';
import { registerSchema } from '$lib/validation/account';
import { fieldErrors } from '$lib/validation/fields';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals }) => {
	if (locals.user) redirect(303, '/');
	return { groups: await listGroupNames() };
};

export const actions: Actions = {
	default: async ({ request }) => {
		const form = Object.fromEntries(await request.formData());
		const values = {
			name: typeof form.name === 'string' ? form.name : '',
			email: typeof form.email === 'string' ? form.email : '',
			groupId: typeof form.groupId === 'string' ? form.groupId : ''
		};
		const parsed = registerSchema.safeParse(form);
		if (!parsed.success) {
			return fail(400, { values, errors: fieldErrors(parsed.error), message: '' });
		}

		const result = await attempt(() => register(parsed.data));
		if (!result.ok) {
			const details = result.error.details as { fields?: Record<string, string> } | undefined;
			return fail(result.error.status, {
				values,
				errors: details?.fields ?? {},
				message: result.error.message
			});
		}
		redirect(303, '/signin?registered=1');
	}
};
