import { json } from '@sveltejs/kit';
import { isoInZone } from '$lib/domain/time';
import { config } from '$lib/server/config';
import { requireUser } from '$lib/server/guard';
import { listBoxes } from '$lib/server/services/boxes';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireUser(event);
	const tz = config.facilityTz;
	const boxes = await listBoxes();
	return json({
		boxes: boxes.map((b) => ({
			...b,
			latestReading: b.latestReading && {
				...b.latestReading,
				at: isoInZone(b.latestReading.at, tz)
			},
			currentOutage: b.currentOutage && {
				...b.currentOutage,
				endAt: isoInZone(b.currentOutage.endAt, tz)
			}
		}))
	});
};
