import { json } from '@sveltejs/kit';
import { serve } from '$lib/server/api';
import { requireRole } from '$lib/server/guard';
import { readJson } from '$lib/server/http';
import { createBooking } from '$lib/server/services/bookings';
import { toPublic } from '$lib/server/services/calendar';
import { bookingSchema } from '$lib/validation/bookings';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'member');
	const input = await readJson(event.request, bookingSchema);
	const booking = await serve(() => createBooking(user, input));
	return json({ booking: toPublic(booking) }, { status: 201 });
};
