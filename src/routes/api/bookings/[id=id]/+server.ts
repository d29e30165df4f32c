import { json } from '@sveltejs/kit';
import { serve } from '$lib/server/api';
import { requireRole } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { cancelBooking, getBooking } from '$lib/server/services/bookings';
import { toPublic } from '$lib/server/services/calendar';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	const user = requireRole(event, 'member');
	const id = idParam(event.params.id, 'The booking');
	return json({ booking: toPublic(await serve(() => getBooking(user, id))) });
};

export const DELETE: RequestHandler = async (event) => {
	const user = requireRole(event, 'member');
	const id = idParam(event.params.id, 'The booking');
	const reason = event.url.searchParams.get('reason')?.slice(0, 500) || undefined;
	const booking = await serve(() => cancelBooking(user, id, reason));
	return json({ booking: toPublic(booking) });
};
