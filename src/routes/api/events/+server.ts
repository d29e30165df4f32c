import { json } from '@sveltejs/kit';
import { requireUser } from '$lib/server/guard';
import { invalidInput } from '$lib/server/http';
import { events } from '$lib/server/services/calendar';
import { rangeSchema } from '$lib/validation/bookings';
import { fieldErrors } from '$lib/validation/fields';
import type { RequestHandler } from './$types';

/** Every box's events in the range: the all-boxes day view. */
export const GET: RequestHandler = async (event) => {
	const user = requireUser(event);
	const range = rangeSchema.safeParse(Object.fromEntries(event.url.searchParams));
	if (!range.success)
		invalidInput(fieldErrors(range.error), 'Give start and end as ISO 8601 date-times.');
	return json({ events: await events('all', range.data.start, range.data.end, user) });
};
