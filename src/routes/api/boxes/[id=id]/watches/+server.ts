import { json } from '@sveltejs/kit';
import { isoInZone } from '$lib/domain/time';
import { serve } from '$lib/server/api';
import { config } from '$lib/server/config';
import { requireRole } from '$lib/server/guard';
import { readJson } from '$lib/server/http';
import { idParam } from '$lib/server/params';
import { createWatch } from '$lib/server/services/watches';
import { watchSchema } from '$lib/validation/bookings';
import type { RequestHandler } from './$types';

/** "Tell me if this frees up": one notice when the whole time is free on the box. */
export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'member');
	const boxId = idParam(event.params.id, 'The box');
	const input = await readJson(event.request, watchSchema);
	const watch = await serve(() => createWatch(user, boxId, input));
	const tz = config.facilityTz;
	return json(
		{
			watch: {
				id: watch.id,
				boxId: watch.boxId,
				start: isoInZone(watch.startAt, tz),
				end: isoInZone(watch.endAt, tz),
				notifiedAt: watch.notifiedAt && isoInZone(watch.notifiedAt, tz)
			}
		},
		{ status: 201 }
	);
};
