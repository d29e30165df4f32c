import { fail } from '@sveltejs/kit';
import { requireUser } from '$lib/server/guard';
import { db } from '$lib/server/db';
import { alternativeFinder } from '$lib/server/services/alternatives';
import {
	bookingsOf,
	cancelBooking,
	createBooking,
	getBooking
} from '$lib/server/services/bookings';
import { attempt } from '$lib/server/services/errors';
import { cancelSchema } from '$lib/validation/bookings';
import { formId } from '$lib/server/forms';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const mine = await bookingsOf(user.id);
	// Bookings an outage cancelled in the last week get fresh offers, checked again on booking.
	const weekAgo = Date.now() - 7 * 86_400_000;
	const hit = mine.past.filter((b) => b.cancelCause === 'outage' && b.startAt.getTime() > weekAgo);
	const alternativesFor = hit.length ? await alternativeFinder(db, [user.id]) : null;
	const rebook = hit.map((b) => ({
		bookingId: b.id,
		boxName: b.boxName,
		startAt: b.startAt,
		endAt: b.endAt,
		offers: alternativesFor!(
			user.id,
			Math.round((b.endAt.getTime() - b.startAt.getTime()) / 60_000),
			b.boxId
		)
	}));
	return { ...mine, rebook };
};

export const actions: Actions = {
	rebook: async (event) => {
		const user = requireUser(event);
		const form = await event.request.formData();
		const found = await attempt(() => getBooking(user, formId(form.get('fromBookingId'))));
		const original = found.ok ? found.value : null;
		if (!original || original.userId !== user.id)
			return fail(404, { message: 'That booking was not found.' });
		const start = new Date(String(form.get('start')));
		const end = new Date(String(form.get('end')));
		const boxId = formId(form.get('boxId'));
		if (
			Number.isNaN(start.getTime()) ||
			Number.isNaN(end.getTime()) ||
			!Number.isSafeInteger(boxId)
		) {
			return fail(400, { message: 'That offer is not valid any more; pick another.' });
		}
		// The same rules as any booking: the offer may have been taken since the page loaded.
		const result = await attempt(() =>
			createBooking(user, {
				boxId,
				start,
				end,
				purpose: original.purpose,
				chemicalClasses: original.chemicalClasses,
				volatileSolvents: original.volatileSolvents
			})
		);
		if (!result.ok) {
			const reasons =
				(result.error.details as { reasons?: { message: string }[] } | undefined)?.reasons ?? [];
			return fail(result.error.status, {
				message: [result.error.message, ...reasons.map((r) => r.message)].join(' ')
			});
		}
		return { rebooked: result.value.id };
	},
	cancel: async (event) => {
		const user = requireUser(event);
		const form = await event.request.formData();
		const id = formId(form.get('bookingId'));
		const parsed = cancelSchema.safeParse({ reason: form.get('reason') ?? undefined });
		if (!Number.isSafeInteger(id) || id <= 0 || !parsed.success) {
			return fail(400, { message: 'Choose a booking to cancel.' });
		}
		const result = await attempt(() => cancelBooking(user, id, parsed.data.reason));
		if (!result.ok) return fail(result.error.status, { message: result.error.message });
		return { cancelled: id };
	}
};
