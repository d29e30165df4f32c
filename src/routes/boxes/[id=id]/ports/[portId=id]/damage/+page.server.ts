import { error, fail, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { damageLocations } from '$lib/domain/gloves';
import { requireRole, requireUser } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { attempt, ServiceError } from '$lib/server/services/errors';
import { runForm } from '$lib/server/forms';
import { startGloveChange } from '$lib/server/services/glove-change-start';
import { portAndGlove, reportDamage } from '$lib/server/services/gloves';
import { checkPhoto, put, remove } from '$lib/server/storage';
import type { Actions, PageServerLoad } from './$types';

const reportSchema = z.strictObject({
	location: z.enum(damageLocations, { error: 'Where on the glove is the damage?' }),
	hand: z.enum(['left', 'right'], { error: 'Which hand’s glove?' }),
	holeSizeMm: z.coerce
		.number({ error: 'Give the hole’s size in mm (your best estimate).' })
		.min(0, 'The size cannot be negative.')
		.max(1000, 'That is larger than any glove.'),
	notes: z.string().trim().max(1000).optional()
});

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
		const { glove } = await portOf(
			idParam(event.params.id, 'The box'),
			idParam(event.params.portId, 'The port')
		);
		if (!glove)
			return fail(409, { values: {}, errors: {}, message: 'No glove is recorded on this port.' });
		return runForm(
			event.request,
			reportSchema,
			async (input, form) => {
				const photo = form.get('photo');
				let photoKey: string | undefined;
				if (photo instanceof File && photo.size > 0) {
					const checked = await checkPhoto(photo);
					if (!checked.ok)
						throw new ServiceError(400, checked.message, { fields: { photo: checked.message } });
					photoKey = await put('gloves', checked.bytes, checked.ext);
				}
				try {
					const { catastrophic } = await reportDamage(user, {
						gloveId: glove.id,
						...input,
						photoKey
					});
					return { reported: true, catastrophic, holeSizeMm: input.holeSizeMm };
				} catch (e) {
					// Nothing points at the photo without its report.
					if (photoKey) await remove(photoKey).catch(() => undefined);
					throw e;
				}
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
