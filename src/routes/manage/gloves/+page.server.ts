import { formId, runForm } from '$lib/server/forms';
import { requireRole } from '$lib/server/guard';
import { addStockKind, listStock, updateStock } from '$lib/server/services/glove-stock';
import { stockCountSchema, stockKindSchema } from '$lib/validation/glove-changes';
import { gloveHands, materialLabel } from '$lib/domain/gloves';
import { listInMemory, readListQuery, type ListSpec } from '$lib/domain/listing';
import type { Actions, PageServerLoad } from './$types';

// The kinds of spare glove: a short list by nature, so sorted and filtered in memory.
const stockList = {
	sorts: ['glove', 'size', 'quantity'],
	defaultSort: 'glove',
	defaultDir: 'asc',
	filters: { hand: gloveHands, low: ['yes'] },
	perPage: 50
} as const satisfies ListSpec;

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'manager');
	const stock = await listStock();
	const list = listInMemory(stock, readListQuery(event.url.searchParams, stockList), {
		sortBy: {
			glove: (s) => `${materialLabel[s.material]} ${s.size} ${s.hand}`,
			size: (s) => s.size,
			quantity: (s) => s.quantity
		},
		filter: {
			hand: (s, hand) => s.hand === hand,
			low: (s) => s.quantity <= s.minQuantity
		}
	});
	return {
		low: stock.filter((s) => s.quantity <= s.minQuantity),
		stock: list.rows,
		view: list.view,
		kinds: stock.length
	};
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
