import { json } from '@sveltejs/kit';
import { serve } from '$lib/server/api';
import { requireRole } from '$lib/server/guard';
import { readJson } from '$lib/server/http';
import { createBooking, createSeries } from '$lib/server/services/bookings';
import { toPublic } from '$lib/server/services/calendar';
import { bookingSchema } from '$lib/validation/bookings';
import type { RequestHandler } from './$types';

/** One booking (`{booking}`), or with `repeatWeeks` a weekly series (`{created, refused}`). */
export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'member');
	const { repeatWeeks, ...input } = await readJson(event.request, bookingSchema);
	if (repeatWeeks === undefined) {
		const booking = await serve(() => createBooking(user, input));
		return json({ booking: toPublic(booking) }, { status: 201 });
	}
	const { created, refused } = await serve(() => createSeries(user, input, repeatWeeks));
	return json({ created: created.map((b) => toPublic(b)), refused }, { status: 201 });
};
