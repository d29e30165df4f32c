import { json } from '@sveltejs/kit';
import { isoInZone } from '$lib/domain/time';
import { serve } from '$lib/server/api';
import { config } from '$lib/server/config';
import { requireRole } from '$lib/server/guard';
import { readJson } from '$lib/server/http';
import { idParam } from '$lib/server/params';
import { createOutage } from '$lib/server/services/outages';
import { outageSchema } from '$lib/validation/outages';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'manager');
	const boxId = idParam(event.params.id, 'The box');
	const input = await readJson(event.request, outageSchema);
	const { outage, cancelledBookingIds } = await serve(() => createOutage(user, boxId, input));
	const tz = config.facilityTz;
	return json(
		{
			outage: {
				id: outage.id,
				boxId: outage.boxId,
				start: isoInZone(outage.startAt, tz),
				end: isoInZone(outage.endAt, tz),
				kind: outage.kind,
				reason: outage.reason
			},
			cancelledBookingIds
		},
		{ status: 201 }
	);
};
