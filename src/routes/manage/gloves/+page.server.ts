import { fail } from '@sveltejs/kit';
import { formId } from '$lib/server/forms';
import { requireRole } from '$lib/server/guard';
import { attempt } from '$lib/server/services/errors';
import { addStockKind, listStock, updateStock } from '$lib/server/services/glove-stock';
import { fieldErrors } from '$lib/validation/fields';
import { fromForm, stockCountSchema, stockKindSchema } from '$lib/validation/glove-changes';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'manager');
	return { stock: await listStock() };
};

export const actions: Actions = {
	add: async (event) => {
		const actor = requireRole(event, 'manager');
		const values = fromForm(await event.request.formData());
		const parsed = stockKindSchema.safeParse(values);
		if (!parsed.success)
			return fail(400, {
				form: 'add',
				values,
				errors: fieldErrors(parsed.error),
				message: 'Please correct the fields marked below.'
			});
		const result = await attempt(() => addStockKind(actor, parsed.data));
		if (!result.ok)
			return fail(result.error.status, {
				form: 'add',
				values,
				errors: {},
				message: result.error.message
			});
		return { form: 'add', added: true };
	},
	count: async (event) => {
		const actor = requireRole(event, 'manager');
		const form = await event.request.formData();
		const id = formId(form.get('id'));
		const values = fromForm(form);
		delete values.id;
		const parsed = stockCountSchema.safeParse(values);
		if (!parsed.success)
			return fail(400, {
				form: `count-${id}`,
				values,
				errors: fieldErrors(parsed.error),
				message: 'Please correct the counts.'
			});
		const result = await attempt(() => updateStock(actor, id, parsed.data));
		if (!result.ok)
			return fail(result.error.status, { form: `count-${id}`, message: result.error.message });
		return { form: `count-${id}`, saved: true };
	}
};
