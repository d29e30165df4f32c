import { z } from 'zod';
import { outageKinds } from '$lib/domain/bookings';
import { isoDateTime } from './bookings';

export const outageSchema = z
	.strictObject({
		start: isoDateTime('start'),
		end: isoDateTime('end'),
		kind: z.enum(outageKinds, { error: 'Choose what kind of upkeep this is.' }),
		reason: z
			.string({ error: 'Give a reason; it goes to everyone whose booking is cancelled.' })
			.trim()
			.min(3, 'Give a reason; it goes to everyone whose booking is cancelled.')
			.max(500, 'Use at most 500 characters.')
	})
	.refine((v) => !(v.start instanceof Date && v.end instanceof Date) || v.end > v.start, {
		path: ['end'],
		message: 'The expected end must be after the start.'
	});

const outageId = z.coerce
	.number({ error: 'Choose an outage.' })
	.int('Choose an outage.')
	.positive('Choose an outage.');

/** Ending an outage from the box page. */
export const endOutageSchema = z.strictObject({ outageId });

/** Moving an outage's expected end from the box page. */
export const moveOutageSchema = z.strictObject({ outageId, end: isoDateTime('end') });
