import { requireUser } from '$lib/server/guard';
import { runForm } from '$lib/server/forms';
import { rebookOffers } from '$lib/server/services/alternatives';
import { cancelBooking, rebook } from '$lib/server/services/bookings';
import { bookingsOf } from '$lib/server/services/calendar';
import { cancelFormSchema, rebookSchema } from '$lib/validation/bookings';
import type { Actions, PageServerLoad } from './$types';

const WEEK_MS = 7 * 86_400_000;

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const mine = await bookingsOf(user.id);
	// Bookings an outage cancelled in the last week get fresh offers.
	const hit = mine.past.filter(
		(b) => b.cancelCause === 'outage' && b.startAt.getTime() > Date.now() - WEEK_MS
	);
	return { ...mine, rebook: await rebookOffers(user.id, hit) };
};

export const actions: Actions = {
	rebook: async (event) => {
		const user = requireUser(event);
		return runForm(event.request, rebookSchema, async ({ fromBookingId, ...slot }) => ({
			rebooked: (await rebook(user, fromBookingId, slot)).id
		}));
	},
	cancel: async (event) => {
		const user = requireUser(event);
		return runForm(event.request, cancelFormSchema, async ({ bookingId, reason }) => {
			await cancelBooking(user, bookingId, reason);
			return { cancelled: bookingId };
		});
	}
};
