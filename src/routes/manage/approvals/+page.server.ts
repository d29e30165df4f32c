import { hasRole } from '$lib/domain/roles';
import { requirePiOrRole, requireRole } from '$lib/server/guard';
import { decideBooking, pendingBookings } from '$lib/server/services/bookings';
import { approveAccount, declineAccount, pendingAccountsFor } from '$lib/server/services/accounts';
import { decisionSchema } from '$lib/validation/account';
import { approveBookingSchema, declineSchema } from '$lib/validation/bookings';
import { runForm } from '$lib/server/forms';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = await requirePiOrRole(event, 'manager');
	const isManager = hasRole(user.role, 'manager');
	return {
		pending: await pendingAccountsFor(user),
		bookings: isManager ? await pendingBookings() : [],
		isManager
	};
};

async function decide(event: RequestEvent, decision: typeof approveAccount) {
	const user = await requirePiOrRole(event, 'manager');
	return runForm(event.request, decisionSchema, async ({ userId }) => {
		await decision(user, userId);
		return { decided: userId };
	});
}

export const actions: Actions = {
	approve: (event) => decide(event, approveAccount),
	decline: (event) => decide(event, declineAccount),
	approveBooking: async (event) => {
		const user = requireRole(event, 'manager');
		return runForm(event.request, approveBookingSchema, async ({ bookingId }) => {
			await decideBooking(user, bookingId, 'approve');
			return { bookingDecided: bookingId };
		});
	},
	declineBooking: async (event) => {
		const user = requireRole(event, 'manager');
		return runForm(event.request, declineSchema, async ({ bookingId, reason }) => {
			await decideBooking(user, bookingId, 'decline', reason);
			return { bookingDecided: bookingId };
		});
	}
};
