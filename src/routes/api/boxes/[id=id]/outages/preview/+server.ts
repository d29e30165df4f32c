import { json } from '@sveltejs/kit';
import { isoInZone } from '$lib/domain/time';
import { serve } from '$lib/server/api';
import { config } from '$lib/server/config';
import { requireRole } from '$lib/server/guard';
import { readJson } from '$lib/server/http';
import { idParam } from '$lib/server/params';
import { previewOutage } from '$lib/server/services/outage-reads';
import { previewSchema } from '$lib/validation/glove-changes';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	const actor = requireRole(event, 'manager');
	const boxId = idParam(event.params.id, 'The box');
	const window = await readJson(event.request, previewSchema);
	const bookings = await serve(() => previewOutage(actor, boxId, window));
	return json({
		bookings: bookings.map((b) => ({
			id: b.id,
			userName: b.userName,
			start: isoInZone(b.start, config.facilityTz),
			end: isoInZone(b.end, config.facilityTz)
		}))
	});
};
