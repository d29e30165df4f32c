import { error, fail, redirect } from '@sveltejs/kit';
import { requireRole, requireUser } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { attempt } from '$lib/server/services/errors';
import { startGloveChange } from '$lib/server/services/glove-change-start';
import { portView } from '$lib/server/services/gloves';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireUser(event);
	const found = await attempt(() =>
		portView(idParam(event.params.id, 'The box'), idParam(event.params.portId, 'The port'))
	);
	if (!found.ok) error(404, { message: 'That port was not found.', code: 'not_found' });
	return found.value;
};

export const actions: Actions = {
	/** A catastrophic hole: one click seals the port, the change and its outage start now. */
	sealNow: async (event) => {
		const actor = requireRole(event, 'manager');
		const boxId = idParam(event.params.id, 'The box');
		const portId = idParam(event.params.portId, 'The port');
		const result = await attempt(() => startGloveChange(actor, boxId, { portId }));
		if (!result.ok) return fail(result.error.status, { message: result.error.message });
		redirect(303, `/manage/glove-changes/${result.value.id}`);
	}
};
