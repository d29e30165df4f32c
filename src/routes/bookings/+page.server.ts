import { requireUser } from '$lib/server/guard';
import { runConfirmedForm, runForm } from '$lib/server/forms';
import { rebookOffers } from '$lib/server/services/alternatives';
import { cancelBooking, rebook } from '$lib/server/services/bookings';
import {
	pastBookingsList,
	pastBookingsOf,
	recentlyCancelledByOutage,
	upcomingBookingsOf
} from '$lib/server/services/calendar';
import { readListQuery } from '$lib/domain/listing';
import { cancellationConsequence, mayCancel } from '$lib/domain/booking-state';
import { ServiceError } from '$lib/server/services/errors';
import { formatRange } from '$lib/domain/time';
import { config } from '$lib/server/config';
import { cancelFormSchema, rebookSchema } from '$lib/validation/bookings';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const query = readListQuery(event.url.searchParams, pastBookingsList);
	const [upcoming, past, hit] = await Promise.all([
		upcomingBookingsOf(user.id),
		pastBookingsOf(user.id, query),
		// Bookings an outage cancelled in the last week get fresh offers.
		recentlyCancelledByOutage(user.id)
	]);
	return {
		upcoming,
		past: past.rows,
		pastView: past.view,
		rebook: await rebookOffers(user.id, hit)
	};
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
		return runConfirmedForm(
			event.request,
			cancelFormSchema,
			async ({ bookingId }) => {
				const now = new Date();
				const b = await cancellable(user.id, bookingId, now);
				// Someone else's booking (a manager's cancellation, never billed) is asked about
				// without its details; one that cannot be found is refused by the service.
				if (!b)
					return {
						title: 'Cancel this booking?',
						message: 'Its holder sees it cancelled; a manager’s cancellation is not billed.',
						yes: 'Yes, cancel it'
					};
				return {
					title: `Cancel ${b.boxName}, ${formatRange(b.startAt, b.endAt, config.facilityTz)}?`,
					message: cancellationConsequence(b, now),
					yes: 'Yes, cancel it'
				};
			},
			async ({ bookingId, reason }) => {
				await cancellable(user.id, bookingId, new Date());
				await cancelBooking(user, bookingId, reason);
				return { cancelled: bookingId };
			}
		);
	}
};

/**
 * The user's own booking still ahead, refused when it can no longer be cancelled (checked
 * out: the work is over). Undefined when it is not theirs; the service decides then.
 */
async function cancellable(userId: number, bookingId: number, now: Date) {
	const b = (await upcomingBookingsOf(userId, now)).find((x) => x.id === bookingId);
	if (b && !mayCancel(b, now))
		throw new ServiceError(409, 'This booking is checked out; it can no longer be cancelled.');
	return b;
}
