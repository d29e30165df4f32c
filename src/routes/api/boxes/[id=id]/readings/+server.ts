import { json } from '@sveltejs/kit';
import { isoInZone } from '$lib/domain/time';
import { serve } from '$lib/server/api';
import { config } from '$lib/server/config';
import { requireRole, requireUser } from '$lib/server/guard';
import { fail, readJson } from '$lib/server/http';
import { idParam } from '$lib/server/params';
import { recordReading } from '$lib/server/services/atmosphere';
import { chartSeries } from '$lib/server/services/reading-series';
import { readingSchema } from '$lib/validation/readings';
import { readReadingRange } from '$lib/validation/reading-range';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'member');
	const boxId = idParam(event.params.id, 'The box');
	const input = await readJson(event.request, readingSchema);
	const reading = await serve(() => recordReading(user, boxId, { ...input, source: 'manual' }));
	return json(
		{
			reading: {
				id: reading.id,
				boxId,
				at: isoInZone(reading.at, config.facilityTz),
				o2Ppm: input.o2Ppm,
				h2oPpm: input.h2oPpm
			},
			atmosphereState: reading.state
		},
		{ status: 201 }
	);
};

/** The longest range one request may chart: a year and a bit. */
const MAX_CHART_DAYS = 400;

/**
 * `?from=&to=` (ISO 8601 date-times, or dates as whole facility days), the last 7 days by
 * default: the chart's series, raw or bucketed (db/reading-series.ts).
 */
export const GET: RequestHandler = async (event) => {
	requireUser(event);
	const boxId = idParam(event.params.id, 'The box');
	const range = readReadingRange(event.url.searchParams, config.facilityTz, {
		maxDays: MAX_CHART_DAYS
	});
	if (!range.ok) fail(400, range.message, { fields: range.fields });
	return json(await serve(() => chartSeries(boxId, range.from, range.to)));
};
