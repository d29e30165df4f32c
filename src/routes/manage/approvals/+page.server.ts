import { fail } from '@sveltejs/kit';
import { hasRole } from '$lib/domain/roles';
import { requirePiOrRole, requireRole } from '$lib/server/guard';
import { decideBooking, pendingBookings } from '$lib/server/services/bookings';
import { approveAccount, declineAccount, pendingAccountsFor } from '$lib/server/services/accounts';
import { attempt } from '$lib/server/services/errors';
import { decisionSchema } from '$lib/validation/account';
import { declineSchema } from '$lib/validation/bookings';
import { formId } from '$lib/server/forms';
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
	const parsed = decisionSchema.safeParse(Object.fromEntries(await event.request.formData()));
	if (!parsed.success) return fail(400, { message: 'Choose an account to decide.' });
	const result = await attempt(() => decision(user, parsed.data.userId));
	if (!result.ok) return fail(result.error.status, { message: result.error.message });
	return { decided: parsed.data.userId };
}

export const actions: Actions = {
	approve: (event) => decide(event, approveAccount),
	decline: (event) => decide(event, declineAccount),
	approveBooking: async (event) => {
		const user = requireRole(event, 'manager');
		const id = formId((await event.request.formData()).get('bookingId'));
		if (!Number.isSafeInteger(id) || id <= 0) return fail(400, { message: 'Choose a booking.' });
		const result = await attempt(() => decideBooking(user, id, 'approve'));
		if (!result.ok) return fail(result.error.status, { message: result.error.message });
		return { bookingDecided: id };
	},
	declineBooking: async (event) => {
		const user = requireRole(event, 'manager');
		const parsed = declineSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { message: 'Say why the booking is declined.' });
		const result = await attempt(() =>
			decideBooking(user, parsed.data.bookingId, 'decline', parsed.data.reason)
		);
		if (!result.ok) return fail(result.error.status, { message: result.error.message });
		return { bookingDecided: parsed.data.bookingId };
	}
};
