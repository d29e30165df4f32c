import { json } from '@sveltejs/kit';
import { requireUser } from '$lib/server/guard';
import { fail, invalidInput } from '$lib/server/http';
import { idParam } from '$lib/server/params';
import { events } from '$lib/server/services/calendar';
import { boxExists } from '$lib/server/services/boxes';
import { rangeSchema } from '$lib/validation/bookings';
import { fieldErrors } from '$lib/validation/fields';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	const user = requireUser(event);
	const boxId = idParam(event.params.id, 'The box');
	const range = rangeSchema.safeParse(Object.fromEntries(event.url.searchParams));
	if (!range.success)
		invalidInput(fieldErrors(range.error), 'Give start and end as ISO 8601 date-times.');
	if (!(await boxExists(boxId))) fail(404, 'The box was not found.');
	return json({ events: await events([boxId], range.data.start, range.data.end, user) });
};
