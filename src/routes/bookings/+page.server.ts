import { fail } from '@sveltejs/kit';
import { requireUser } from '$lib/server/guard';
import { bookingsOf, cancelBooking } from '$lib/server/services/bookings';
import { attempt } from '$lib/server/services/errors';
import { cancelSchema } from '$lib/validation/bookings';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	return await bookingsOf(user.id);
};

export const actions: Actions = {
	cancel: async (event) => {
		const user = requireUser(event);
		const form = await event.request.formData();
		const id = Number(form.get('bookingId'));
		const parsed = cancelSchema.safeParse({ reason: form.get('reason') ?? undefined });
		if (!Number.isSafeInteger(id) || id <= 0 || !parsed.success) {
			return fail(400, { message: 'Choose a booking to cancel.' });
		}
		const result = await attempt(() => cancelBooking(user, id, parsed.data.reason));
		if (!result.ok) return fail(result.error.status, { message: result.error.message });
		return { cancelled: id };
	}
};
