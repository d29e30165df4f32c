import { error, fail, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { damageLocations } from '$lib/domain/gloves';
import { requireRole, requireUser } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { attempt } from '$lib/server/services/errors';
import { startGloveChange } from '$lib/server/services/glove-changes';
import { portAndGlove, reportDamage } from '$lib/server/services/gloves';
import { checkPhoto, put, remove } from '$lib/server/storage';
import { fieldErrors } from '$lib/validation/fields';
import type { Actions, PageServerLoad } from './$types';

const reportSchema = z.object({
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
		if (!glove) return fail(409, { message: 'No glove is recorded on this port.', errors: {} });
		const form = await event.request.formData();
		const values = Object.fromEntries([...form.entries()].filter(([k]) => k !== 'photo'));
		const parsed = reportSchema.safeParse(values);
		if (!parsed.success)
			return fail(400, {
				values,
				errors: fieldErrors(parsed.error),
				message: 'Please correct the fields marked below.'
			});
		let photoKey: string | undefined;
		const photo = form.get('photo');
		if (photo instanceof File && photo.size > 0) {
			const checked = await checkPhoto(photo);
			if (!checked.ok)
				return fail(400, { values, errors: { photo: checked.message }, message: checked.message });
			photoKey = await put('gloves', checked.bytes, checked.ext);
		}
		const result = await attempt(() =>
			reportDamage(user, { gloveId: glove.id, ...parsed.data, photoKey })
		);
		if (!result.ok) {
			// Nothing points at the photo without its report.
			if (photoKey) await remove(photoKey).catch(() => undefined);
			return fail(result.error.status, { values, errors: {}, message: result.error.message });
		}
		return {
			reported: true,
			catastrophic: result.value.catastrophic,
			holeSizeMm: parsed.data.holeSizeMm
		};
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
