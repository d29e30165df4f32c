import { json } from '@sveltejs/kit';
import { isoInZone } from '$lib/domain/time';
import { serve } from '$lib/server/api';
import { config } from '$lib/server/config';
import { requireRole } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { endOutage } from '$lib/server/services/outages';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	const actor = requireRole(event, 'manager');
	const id = idParam(event.params.id, 'The outage');
	const outage = await serve(() => endOutage(actor, id));
	return json({
		outage: {
			id: outage.id,
			boxId: outage.boxId,
			start: isoInZone(outage.startAt, config.facilityTz),
			end: isoInZone(outage.endAt, config.facilityTz),
			kind: outage.kind,
			reason: outage.reason
		}
	});
};
