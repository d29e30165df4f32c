import { error, redirect } from '@sveltejs/kit';
import { runConfirmedForm } from '$lib/server/forms';
import { requireRole } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { getBox, portsLosingGloves, updateBox } from '$lib/server/services/boxes';
import { attempt } from '$lib/server/services/errors';
import { listModules } from '$lib/server/services/training';
import { boxFormToInput, boxSchema } from '$lib/validation/boxes';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'manager');
	const id = idParam(event.params.id, 'The box');
	const found = await attempt(() => getBox(id));
	if (!found.ok) error(404, { message: 'That box was not found.', code: 'not_found' });
	const { box, summary } = found.value;
	const modules = await listModules();
	return {
		id,
		name: box.name,
		modules: modules.map((m) => ({ id: m.id, name: m.name })),
		values: {
			...box,
			ports: summary.ports,
			requiredModuleIds: summary.requiredModules.map((m) => m.id)
		}
	};
};

export const actions: Actions = {
	default: async (event) => {
		const actor = requireRole(event, 'manager');
		const id = idParam(event.params.id, 'The box');
		const answer = await runConfirmedForm(
			event.request,
			boxSchema,
			// A port taken off the list is deleted with its gloves' records: say so first.
			async ({ ports }) => {
				const removed = await portsLosingGloves(id, ports);
				if (!removed.length) return null;
				return {
					title: removed.length === 1 ? 'Remove a port?' : `Remove ${removed.length} ports?`,
					message:
						'A removed port is deleted with its gloves, their inspections and its glove-change history.',
					details: removed.map(
						(p) =>
							`${p.position} port${p.glove ? ', with the glove fitted on it' : ', no glove fitted'}`
					),
					yes: removed.length === 1 ? 'Yes, remove the port' : 'Yes, remove the ports'
				};
			},
			async (input) => ({ updated: await updateBox(actor, id, input) }),
			{ read: boxFormToInput }
		);
		if ('updated' in answer) redirect(303, `/boxes/${id}`);
		return answer;
	}
};
