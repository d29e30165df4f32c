import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { isoInZone } from '$lib/domain/time';
import { serve } from '$lib/server/api';
import { config } from '$lib/server/config';
import { requireRole, requireUser } from '$lib/server/guard';
import { fail, invalidInput, readJson } from '$lib/server/http';
import { idParam } from '$lib/server/params';
import { readingSeries, recordReading } from '$lib/server/services/atmosphere';
import { boxExists } from '$lib/server/services/boxes';
import { readingSchema } from '$lib/validation/readings';
import { isoDateTime } from '$lib/validation/bookings';
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

const rangeSchema = z.object({ from: isoDateTime('from'), to: isoDateTime('to') });
/** The longest range one request may chart. */
const MAX_RANGE_DAYS = 400;

/** `?from=&to=` (ISO 8601), the last 7 days by default: a chart's series. */
export const GET: RequestHandler = async (event) => {
	requireUser(event);
	const boxId = idParam(event.params.id, 'The box');
	if (!(await boxExists(boxId))) fail(404, 'The box was not found.');
	const params = event.url.searchParams;
	const now = new Date();
	const parsed = rangeSchema.safeParse({
		from: params.get('from') ?? new Date(now.getTime() - 7 * 86_400_000).toISOString(),
		to: params.get('to') ?? now.toISOString()
	});
	if (!parsed.success)
		invalidInput(
			Object.fromEntries(parsed.error.issues.map((i) => [String(i.path[0]), i.message])),
			'Give from and to as ISO 8601 date-times.'
		);
	const { from, to } = parsed.data;
	if (to <= from) invalidInput({ to: 'to must be after from.' }, 'That range is empty.');
	if (to.getTime() - from.getTime() > MAX_RANGE_DAYS * 86_400_000)
		fail(400, `Chart at most ${MAX_RANGE_DAYS} days at a time.`, {
			fields: { from: 'That range is too long.' }
		});
	return json(await readingSeries(boxId, from, to));
};
