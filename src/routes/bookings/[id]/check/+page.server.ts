import { error, fail, redirect } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import { checkInRefusal, checkOutRefusal } from '$lib/domain/checkins';
import { hasRole } from '$lib/domain/roles';
import { db } from '$lib/server/db';
import { bookings, boxes } from '$lib/server/db/schema';
import { requireRole } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { latestReadings } from '$lib/server/services/atmosphere';
import { check } from '$lib/server/services/checkins';
import { attempt } from '$lib/server/services/errors';
import { readingFromForm } from '$lib/validation/readings';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireRole(event, 'member');
	const id = idParam(event.params.id, 'The booking');
	const [booking] = await db
		.select({
			id: bookings.id,
			userId: bookings.userId,
			boxId: bookings.boxId,
			boxName: boxes.name,
			status: bookings.status,
			startAt: bookings.startAt,
			endAt: bookings.endAt,
			purpose: bookings.purpose,
			checkInAt: bookings.checkInAt,
			checkOutAt: bookings.checkOutAt
		})
		.from(bookings)
		.innerJoin(boxes, eq(boxes.id, bookings.boxId))
		.where(eq(bookings.id, id));
	if (!booking || (booking.userId !== user.id && !hasRole(user.role, 'manager')))
		error(404, { message: 'That booking was not found.', code: 'not_found' });
	const now = new Date();
	return {
		booking,
		canCheckIn: checkInRefusal(booking, now),
		canCheckOut: checkOutRefusal(booking, now),
		lastReading: (await latestReadings(booking.boxId, 1))[0] ?? null
	};
};

async function act(event: Parameters<Actions[string]>[0], which: 'in' | 'out') {
	const user = requireRole(event, 'member');
	const id = idParam(event.params.id ?? '', 'The booking');
	const values = Object.fromEntries(await event.request.formData()) as Record<string, string>;
	const { reading, errors } = readingFromForm(values);
	if (Object.keys(errors).length) return fail(400, { values, errors });
	const result = await attempt(() => check(user, id, which, reading));
	if (!result.ok)
		return fail(result.error.status, { values, errors: {}, message: result.error.message });
	redirect(303, `/bookings?checked=${which}`);
}

export const actions: Actions = {
	in: (event) => act(event, 'in'),
	out: (event) => act(event, 'out')
};
