// The booking check of a move: the training gates read before the lock, then the box row
// locked and what it protects read in one round trip (lockBoxForBooking), and checkBooking
// deciding; the refusal in the contract's shape, and the confirmation queued with the
// change. A new booking goes through booking-decision.ts, which sends the same gates and the
// same locked read in its first batch; services/bookings.ts makes, moves and cancels.
import { eq } from 'drizzle-orm';
import { checkBooking, quotaSpan, type Reason } from '$lib/domain/booking-rules';
import { openStatuses, type BookingStatus } from '$lib/domain/bookings';
import { formatRange, isoInZone } from '$lib/domain/time';
import type { BookingInput } from '$lib/validation/bookings';
import { config } from '../config';
import { db, pool, type Transaction } from '../db';
import { gates, lockBoxForBooking, readGates as readGatesRows } from '../db/queries';
import { send } from '../db/raw';
import { bookings } from '../db/schema';
import { bookingConfirmed } from '../mail/messages';
import { enqueue } from '../mail/outbox';
import { notFound, ServiceError } from './errors';

/**
 * What does not race with other bookings, read before the box lock is taken: the same gates
 * (GATES_SQL) as a new booking's, for the holder `userId`, in one round trip.
 */
export async function readGates(userId: number, boxId: number) {
	const gate = gates(boxId);
	const results = await send<unknown[]>(pool.pool, `SET @user = ?;\n${gate.text}`, [
		userId,
		...gate.values
	]);
	return readGatesRows(results.slice(1));
}

export type Gates = Awaited<ReturnType<typeof readGates>>;
type Slot = Pick<BookingInput, 'boxId' | 'start' | 'end' | 'volatileSolvents' | 'chemicalClasses'>;

/**
 * Locks the box row and reads what the lock protects (lockBoxForBooking), then lets the
 * rules decide. Two requests for one slot queue on the box row; the second sees the first.
 * `moving`: the booking being moved, left out of what the request may collide with.
 */
export async function evaluate(
	tx: Transaction,
	userId: number,
	input: Slot,
	now: Date,
	gates: Gates,
	moving?: { id: number; start: Date }
) {
	const near = await lockBoxForBooking(tx, {
		boxId: input.boxId,
		userId,
		start: input.start,
		end: input.end,
		quota: quotaSpan(input.start, input.end, config.facilityTz),
		ignoreBookingId: moving?.id
	});
	if (!near)
		throw new ServiceError(404, 'The box was not found.', { fields: { boxId: 'No such box.' } });
	const { box, others, outages, userBookings } = near;
	const result = checkBooking(
		{
			start: input.start,
			end: input.end,
			volatileSolvents: input.volatileSolvents,
			chemicalClasses: input.chemicalClasses
		},
		{
			now,
			tz: config.facilityTz,
			box: { ...box, requiredModules: gates.requiredModules },
			certifications: gates.certs,
			others,
			outages,
			userBookings,
			current: moving && { start: moving.start }
		}
	);
	return { box, result };
}

export function reasonsForClient(reasons: Reason[]) {
	return reasons.map((r) => ({
		code: r.code,
		message: r.message,
		...(r.conflict
			? {
					conflict: {
						kind: r.conflict.kind,
						id: r.conflict.id,
						start: isoInZone(r.conflict.start, config.facilityTz),
						end: isoInZone(r.conflict.end, config.facilityTz)
					}
				}
			: {})
	}));
}

/** 409 when only overlaps stand in the way, else 422; the reasons in the API's shape. */
export function refusal(reasons: Reason[], status: 409 | 422): ServiceError {
	const details = { reasons: reasonsForClient(reasons) };
	if (status === 409) {
		return new ServiceError(409, 'Someone else holds that time on the box.', {
			...details,
			conflicts: details.reasons.map((r) => r.conflict)
		});
	}
	return new ServiceError(422, 'The booking breaks the box’s rules.', details);
}

/**
 * Refuses (409) a booking no longer to be worked: not pending or confirmed, ended, or checked
 * out (the work is over, whatever its booked end: booking-state.ts mayCancel).
 */
export function mustBeOpen(
	b: { status: BookingStatus; endAt: Date; checkOutAt: Date | null },
	now: Date,
	what: 'cancelled' | 'changed'
) {
	if (!openStatuses.includes(b.status))
		throw new ServiceError(409, `This booking is already ${b.status.replace('_', '-')}.`);
	if (b.endAt <= now) throw new ServiceError(409, 'This booking has already ended.');
	if (b.checkOutAt)
		throw new ServiceError(409, `This booking is checked out; it can no longer be ${what}.`);
}

/**
 * The dedupe key of a booking's confirmation at a SEQUENCE: one message per change. `id` may
 * stand for a booking whose id only SQL knows (booking-decision.ts fills it in there).
 */
export const confirmationKey = (id: number | string, sequence: number) =>
	`booking:${id}:confirmed:${sequence}`;

/** The holder's confirmation (an invitation with the booking's UID), in the caller's transaction. */
export async function queueConfirmation(
	tx: Transaction,
	person: { id: number; email: string; name: string },
	b: { id: number; startAt: Date; endAt: Date; purpose: string; sequence: number },
	box: { name: string; room: string },
	changed = false
) {
	const message = bookingConfirmed({ ...b, boxName: box.name, room: box.room }, person);
	// A change goes out as the same invitation (same UID) with a higher SEQUENCE.
	if (changed) {
		message.kind = 'booking_changed';
		message.subject = `Changed: ${box.name}, ${formatRange(b.startAt, b.endAt, config.facilityTz)}`;
	}
	await enqueue(tx, person, message, confirmationKey(b.id, b.sequence));
}

/** One week of a series that could not be made, as the client sees it. */
export type SeriesRefusal = {
	start: string;
	end: string;
	reasons: ReturnType<typeof reasonsForClient>;
};

/** The box a booking is on (its time is changed under that box's lock); 404 when none. */
export async function boxOf(id: number): Promise<number> {
	const [found] = await db
		.select({ boxId: bookings.boxId })
		.from(bookings)
		.where(eq(bookings.id, id));
	if (!found) throw notFound('The booking');
	return found.boxId;
}
