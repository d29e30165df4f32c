import { error } from '@sveltejs/kit';
import { formId, runForm } from '$lib/server/forms';
import { requireRole, requireUser } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { recordReading } from '$lib/server/services/atmosphere';
import { boxHere, checkAtBox } from '$lib/server/services/box-here';
import { reportPortDamage } from '$lib/server/services/damage-reports';
import { attempt } from '$lib/server/services/errors';
import { portDamageSchema } from '$lib/validation/gloves';
import { checkReadingSchema, readingSchema } from '$lib/validation/readings';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

// The box's phone page, opened from its QR label. Someone not signed in is sent to sign
// in by requireUser and brought back here afterwards (signin's `next`).
export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const found = await attempt(() => boxHere(user, idParam(event.params.id, 'The box')));
	if (!found.ok) error(404, { message: 'That box was not found.', code: 'not_found' });
	return found.value;
};

/** Check in or out of one's own booking on this box, with the reading the service needs. */
async function checkAction(event: RequestEvent, which: 'in' | 'out') {
	const actor = requireRole(event, 'member');
	const boxId = idParam(event.params.id, 'The box');
	return runForm(
		event.request,
		checkReadingSchema,
		async (reading, form) => ({
			checked: which,
			...(await checkAtBox(actor, boxId, formId(form.get('bookingId')), which, reading))
		}),
		{ form: 'check', omit: ['bookingId'] }
	);
}

export const actions: Actions = {
	checkIn: (event) => checkAction(event, 'in'),
	checkOut: (event) => checkAction(event, 'out'),
	reading: async (event) => {
		const actor = requireRole(event, 'member');
		const boxId = idParam(event.params.id, 'The box');
		return runForm(
			event.request,
			readingSchema,
			async (reading) => {
				const { at, state } = await recordReading(actor, boxId, reading);
				return { recorded: { at, state, o2Ppm: reading.o2Ppm, h2oPpm: reading.h2oPpm } };
			},
			{ form: 'reading' }
		);
	},
	damage: async (event) => {
		const user = requireUser(event);
		const boxId = idParam(event.params.id, 'The box');
		return runForm(
			event.request,
			portDamageSchema,
			async ({ portId, ...report }, form) => ({
				reported: await reportPortDamage(user, boxId, portId, report, form.get('photo'))
			}),
			{ form: 'damage', omit: ['photo'] }
		);
	}
};
