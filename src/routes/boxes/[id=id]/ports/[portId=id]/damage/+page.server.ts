import { error, fail, redirect } from '@sveltejs/kit';
import { requireRole, requireUser } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { attempt } from '$lib/server/services/errors';
import { runForm } from '$lib/server/forms';
import { reportPortDamage } from '$lib/server/services/damage-reports';
import { startGloveChange } from '$lib/server/services/glove-change-start';
import { portAndGlove } from '$lib/server/services/gloves';
import { damageReportSchema } from '$lib/validation/gloves';
import type { Actions, PageServerLoad } from './$types';

/** The port and its glove, or the page's 404. */
async function portOf(boxId: number, portId: number) {
	const found = await attempt(() => portAndGlove(boxId, portId));
	if (!found.ok) error(404, { message: 'That port was not found.', code: 'not_found' });
	return found.value;
}

export const load: PageServerLoad = async (event) => {
	requireUser(event);
	return portOf(idParam(event.params.id, 'The box'), idParam(event.params.portId, 'The port'));
};

export const actions: Actions = {
	report: async (event) => {
		const user = requireUser(event);
		const boxId = idParam(event.params.id, 'The box');
		const portId = idParam(event.params.portId, 'The port');
		const { glove } = await portOf(boxId, portId);
		if (!glove)
			return fail(409, { values: {}, errors: {}, message: 'No glove is recorded on this port.' });
		return runForm(
			event.request,
			damageReportSchema,
			async (input, form) => {
				const { catastrophic } = await reportPortDamage(
					user,
					boxId,
					portId,
					input,
					form.get('photo')
				);
				return { reported: true, catastrophic, holeSizeMm: input.holeSizeMm };
			},
			{ omit: ['photo'] }
		);
	},
	outageNow: async (event) => {
		const actor = requireRole(event, 'manager');
		const boxId = idParam(event.params.id, 'The box');
		const portId = idParam(event.params.portId, 'The port');
		const result = await attempt(() => startGloveChange(actor, boxId, { portId }));
		if (!result.ok) return fail(result.error.status, { message: result.error.message, errors: {} });
		redirect(303, `/manage/glove-changes/${result.value.id}`);
	}
};
