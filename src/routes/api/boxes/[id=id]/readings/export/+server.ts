import { serve } from '$lib/server/api';
import { config } from '$lib/server/config';
import { requireUser } from '$lib/server/guard';
import { fail } from '$lib/server/http';
import { idParam } from '$lib/server/params';
import { readingsCsv } from '$lib/server/services/reading-series';
import { readReadingRange } from '$lib/validation/reading-range';
import type { RequestHandler } from './$types';

/**
 * GET /api/boxes/:id/readings/export?from=&to= — the box's readings over any range as CSV
 * (`time,o2_ppm,h2o_ppm,source,note`), streamed. `from` and `to` as on the chart's series,
 * except that without `from` it starts at the box's first reading. Every signed-in person
 * may export.
 */
export const GET: RequestHandler = async (event) => {
	requireUser(event);
	const boxId = idParam(event.params.id, 'The box');
	const range = readReadingRange(event.url.searchParams, config.facilityTz, {
		defaultFrom: new Date(0)
	});
	if (!range.ok) fail(400, range.message, { fields: range.fields });
	const { filename, body } = await serve(() => readingsCsv(boxId, range.from, range.to));
	return new Response(body, {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="${filename}"`,
			'cache-control': 'private, no-store'
		}
	});
};
