import { json } from '@sveltejs/kit';
import { config } from '$lib/server/config';
import { requireUser } from '$lib/server/guard';
import { summaryJson } from '$lib/server/box-json';
import { listBoxes } from '$lib/server/services/boxes';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireUser(event);
	const tz = config.facilityTz;
	return json({ boxes: (await listBoxes()).map((b) => summaryJson(b, tz)) });
};
