import { json, type RequestEvent } from '@sveltejs/kit';
import { isoInZone } from '$lib/domain/time';
import { serve } from './api';
import { config } from './config';
import { requireRole } from './guard';
import { readJson } from './http';
import { idParam } from './params';
import { check } from './services/checkins';
import { checkReadingSchema } from '$lib/validation/readings';

/** POST /api/bookings/:id/check-in and check-out: `{o2Ppm, h2oPpm, note?}`. */
export async function checkEndpoint(event: RequestEvent<{ id: string }>, which: 'in' | 'out') {
	const user = requireRole(event, 'member');
	const id = idParam(event.params.id, 'The booking');
	const { o2Ppm, h2oPpm, note } = await readJson(event.request, checkReadingSchema);
	const result = await serve(() => check(user, id, which, { o2Ppm, h2oPpm, note }));
	return json(
		{
			bookingId: id,
			[which === 'in' ? 'checkInAt' : 'checkOutAt']: isoInZone(result.at, config.facilityTz),
			atmosphereState: result.atmosphereState
		},
		{ status: 201 }
	);
}
