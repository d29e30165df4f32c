import { error, fail, redirect } from '@sveltejs/kit';
import { and, eq, isNull } from 'drizzle-orm';
import { z } from 'zod';
import { damageLocations } from '$lib/domain/gloves';
import { db } from '$lib/server/db';
import { boxes, boxPorts, gloves } from '$lib/server/db/schema';
import { requireRole, requireUser } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { attempt } from '$lib/server/services/errors';
import { reportDamage, startGloveChange } from '$lib/server/services/gloves';
import { notifyManagers } from '$lib/server/services/notifications';
import { checkPhoto, put } from '$lib/server/storage';
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

async function portAndGlove(boxId: number, portId: number) {
	const [port] = await db
		.select({ id: boxPorts.id, position: boxPorts.position, boxName: boxes.name, boxId: boxes.id })
		.from(boxPorts)
		.innerJoin(boxes, eq(boxes.id, boxPorts.boxId))
		.where(and(eq(boxPorts.id, portId), eq(boxPorts.boxId, boxId)));
	if (!port) error(404, { message: 'That port was not found.', code: 'not_found' });
	const [glove] = await db
		.select()
		.from(gloves)
		.where(and(eq(gloves.portId, portId), isNull(gloves.removedAt)));
	return { port, glove: glove ?? null };
}

export const load: PageServerLoad = async (event) => {
	requireUser(event);
	return portAndGlove(
		idParam(event.params.id, 'The box'),
		idParam(event.params.portId, 'The port')
	);
};

export const actions: Actions = {
	report: async (event) => {
		const user = requireUser(event);
		const { port, glove } = await portAndGlove(
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
		if (!result.ok)
			return fail(result.error.status, { values, errors: {}, message: result.error.message });
		if (result.value.catastrophic) {
			await notifyManagers(
				`Glove failure on ${port.boxName}, ${port.position}`,
				`${user.name} reported a ${parsed.data.holeSizeMm} mm hole (${parsed.data.location.replace('_', ' ')}). Take the box out of service.`,
				`/boxes/${port.boxId}`,
				`glove-damage:${result.value.inspectionId}`
			);
		}
		return {
			reported: true,
			catastrophic: result.value.catastrophic,
			holeSizeMm: parsed.data.holeSizeMm
		};
	},
	outageNow: async (event) => {
		const actor = requireRole(event, 'manager');
		const portId = idParam(event.params.portId, 'The port');
		const result = await attempt(() => startGloveChange(actor, portId));
		if (!result.ok) return fail(result.error.status, { message: result.error.message, errors: {} });
		redirect(303, `/manage/glove-changes/${result.value.changeId}`);
	}
};
