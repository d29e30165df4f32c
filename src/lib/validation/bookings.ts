import { z } from 'zod';
import { MAX_REPEAT_WEEKS } from '$lib/domain/bookings';
import { chemicalClassKeys } from '$lib/domain/boxes';

/** ISO 8601 with an offset (or Z), as the HTTP contract requires. */
export const isoDateTime = (field: string) =>
	z.iso
		.datetime({
			offset: true,
			error: `Give a ${field} date and time that exist (ISO 8601 with an offset, e.g. 2026-12-02T09:00:00+01:00).`
		})
		.transform((s) => new Date(s));

const purpose = z
	.string({ error: 'Say what the booking is for.' })
	.trim()
	.min(1, 'Say what the booking is for.')
	.max(200, 'Use at most 200 characters.');

const endAfterStart = {
	path: ['end'],
	message: 'The end must be after the start.'
};
const inOrder = (v: { start?: unknown; end?: unknown }) =>
	!(v.start instanceof Date && v.end instanceof Date) || v.end > v.start;

export const bookingSchema = z
	.object({
		boxId: z.coerce
			.number({ error: 'Choose a box.' })
			.int('Choose a box.')
			.positive('Choose a box.'),
		start: isoDateTime('start'),
		end: isoDateTime('end'),
		purpose,
		chemicalClasses: z
			.array(
				z.enum(chemicalClassKeys as [string, ...string[]], { error: 'Unknown chemical class.' })
			)
			.max(20)
			.default([]),
		volatileSolvents: z.boolean().default(false),
		/** The group billed; one of the booker's own. Omitted: the group they joined first. */
		groupId: z
			.number({ error: 'Choose one of your groups.' })
			.int('Choose one of your groups.')
			.positive('Choose one of your groups.')
			.optional(),
		/** The same slot weekly, this many weeks in all (the first included). */
		repeatWeeks: z
			.number({ error: `Repeat for 1 to ${MAX_REPEAT_WEEKS} weeks.` })
			.int(`Repeat for 1 to ${MAX_REPEAT_WEEKS} weeks.`)
			.min(1, `Repeat for 1 to ${MAX_REPEAT_WEEKS} weeks.`)
			.max(MAX_REPEAT_WEEKS, `Repeat for 1 to ${MAX_REPEAT_WEEKS} weeks.`)
			.optional()
	})
	.refine(inOrder, endAfterStart);

export type BookingInput = z.output<typeof bookingSchema>;

/** PATCH /api/bookings/:id: a move (new start and/or end) or a new purpose, or both. */
export const bookingChangeSchema = z
	.strictObject({
		start: isoDateTime('start').optional(),
		end: isoDateTime('end').optional(),
		purpose: purpose.optional()
	})
	.refine((v) => v.start !== undefined || v.end !== undefined || v.purpose !== undefined, {
		message: 'Give a new start, end or purpose.'
	})
	.refine(inOrder, endAfterStart);

export type BookingChange = z.output<typeof bookingChangeSchema>;

/** The longest time one watch may cover. */
export const LONGEST_WATCH_DAYS = 7;

/** POST /api/boxes/:id/watches: "tell me if this frees up". */
export const watchSchema = z
	.strictObject({ start: isoDateTime('start'), end: isoDateTime('end') })
	.refine(inOrder, endAfterStart)
	.refine(
		(v) =>
			!(v.start instanceof Date && v.end instanceof Date) ||
			v.end.getTime() - v.start.getTime() <= LONGEST_WATCH_DAYS * 86_400_000,
		{ path: ['end'], message: `Watch at most ${LONGEST_WATCH_DAYS} days at a time.` }
	);

export type WatchInput = z.output<typeof watchSchema>;

export const rangeSchema = z
	.object({ start: isoDateTime('start'), end: isoDateTime('end') })
	.refine(inOrder, endAfterStart)
	.refine(
		(v) =>
			!(v.start instanceof Date && v.end instanceof Date) ||
			v.end.getTime() - v.start.getTime() <= 62 * 86_400_000,
		{
			path: ['end'],
			message: 'Ask for at most 62 days at a time.'
		}
	);

export const cancelSchema = z.object({
	reason: z.string().trim().max(500, 'Use at most 500 characters.').optional()
});

export const declineSchema = z.object({
	bookingId: z.coerce
		.number({ error: 'Choose a booking.' })
		.int('Choose a booking.')
		.positive('Choose a booking.'),
	reason: z
		.string({ error: 'Say why the booking is declined.' })
		.trim()
		.min(1, 'Say why the booking is declined.')
		.max(500)
});

export const approveBookingSchema = declineSchema.pick({ bookingId: true });

const bookingId = z.coerce
	.number({ error: 'Choose a booking.' })
	.int('Choose a booking.')
	.positive('Choose a booking.');

/** Cancelling one of one's bookings from My bookings. */
export const cancelFormSchema = z.strictObject({
	bookingId,
	reason: z.string().trim().max(500, 'Use at most 500 characters.').optional()
});

/** Taking one of the free times offered after an outage cancelled a booking. */
export const rebookSchema = z
	.strictObject({
		fromBookingId: bookingId,
		boxId: z.coerce.number({ error: 'Choose a box.' }).int().positive('Choose a box.'),
		start: isoDateTime('start'),
		end: isoDateTime('end')
	})
	.refine((v) => v.end > v.start, { path: ['end'], message: 'The end must be after the start.' });
