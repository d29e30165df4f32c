import { json } from '@sveltejs/kit';
import { serve } from '$lib/server/api';
import { requireRole } from '$lib/server/guard';
import { readJson } from '$lib/server/http';
import { idParam } from '$lib/server/params';
import { cancelBooking, changeBooking, getBooking } from '$lib/server/services/bookings';
import { toPublic } from '$lib/server/services/calendar';
import { bookingChangeSchema } from '$lib/validation/bookings';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	const user = requireRole(event, 'member');
	const id = idParam(event.params.id, 'The booking');
	return json({ booking: toPublic(await serve(() => getBooking(user, id))) });
};

/** Moves the booking or changes its purpose, through the same rules as a new booking. */
export const PATCH: RequestHandler = async (event) => {
	const user = requireRole(event, 'member');
	const id = idParam(event.params.id, 'The booking');
	const change = await readJson(event.request, bookingChangeSchema);
	const booking = await serve(() => changeBooking(user, id, change));
	return json({ booking: toPublic(booking) });
};

export const DELETE: RequestHandler = async (event) => {
	const user = requireRole(event, 'member');
	const id = idParam(event.params.id, 'The booking');
	const reason = event.url.searchParams.get('reason')?.slice(0, 500) || undefined;
	const booking = await serve(() => cancelBooking(user, id, reason));
	return json({ booking: toPublic(booking) });
};
