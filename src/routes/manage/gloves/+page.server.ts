import { formId, runForm } from '$lib/server/forms';
import { requireRole } from '$lib/server/guard';
import { addStockKind, listStock, updateStock } from '$lib/server/services/glove-stock';
import { stockCountSchema, stockKindSchema } from '$lib/validation/glove-changes';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'manager');
	return { stock: await listStock() };
};

export const actions: Actions = {
	add: async (event) => {
		const actor = requireRole(event, 'manager');
		return runForm(
			event.request,
			stockKindSchema,
			async (kind) => {
				await addStockKind(actor, kind);
				return { added: true };
			},
			{ form: 'add' }
		);
	},
	count: async (event) => {
		const actor = requireRole(event, 'manager');
		const form = await event.request.clone().formData();
		const id = formId(form.get('id'));
		return runForm(
			event.request,
			stockCountSchema,
			async (counts) => {
				await updateStock(actor, id, counts);
				return { saved: true };
			},
			{ form: `count-${id}`, omit: ['id'] }
		);
	}
};
