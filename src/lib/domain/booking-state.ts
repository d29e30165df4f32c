// Where a booking stands for the person who holds it: what its status reads on My bookings,
// whether it can still be cancelled, and what cancelling it now would cost. Pure: the
// caller passes `now` and the facility zone.
import { openStatuses, statusLabel, type BookingStatus } from './bookings';
import { formatTime } from './time';
import { chargeOf, type Charge } from './usage';

export type HeldBooking = {
	status: BookingStatus;
	startAt: Date;
	endAt: Date;
	checkInAt: Date | null;
	checkOutAt: Date | null;
	/** The box's late-cancellation window, in hours. */
	cancelWindowHours: number;
};

/**
 * The status in words: "Checked out 14:05" once its holder checked out (the work is done,
 * whatever the booked end), "Checked in 09:02" while they are at the box, else the status.
 */
export function holderStatus(
	b: Pick<HeldBooking, 'status' | 'checkInAt' | 'checkOutAt'>,
	tz: string
): string {
	if (b.status === 'confirmed' || b.status === 'completed') {
		if (b.checkOutAt) return `Checked out ${formatTime(b.checkOutAt, tz)}`;
		if (b.checkInAt) return `Checked in ${formatTime(b.checkInAt, tz)}`;
	}
	return statusLabel[b.status];
}

/**
 * Whether its holder can still cancel it: pending or confirmed, not ended, and not checked
 * out (a booking worked and closed up is over, whatever its booked end).
 */
export function mayCancel(
	b: Pick<HeldBooking, 'status' | 'endAt' | 'checkOutAt'>,
	now: Date
): boolean {
	return openStatuses.includes(b.status) && b.endAt > now && !b.checkOutAt;
}

/**
 * What its holder cancelling it at `now` would be charged: usage.ts's rule (chargeOf) for
 * a cancellation by the booker at that moment. A booking still waiting for approval was
 * never confirmed, so withdrawing it is never billed.
 */
export function cancellationCharge(b: HeldBooking, now: Date): Charge {
	return chargeOf({
		status: 'cancelled',
		cancelCause: 'user',
		cancelledAt: now,
		startAt: b.startAt,
		endAt: b.endAt,
		checkInAt: b.checkInAt,
		cancelWindowHours: b.cancelWindowHours,
		confirmedAt: b.status === 'pending' ? null : undefined
	});
}

/** The consequence of cancelling it now, in words, for the confirmation step. */
export function cancellationConsequence(b: HeldBooking, now: Date): string {
	const charge = cancellationCharge(b, now);
	const window = `${b.cancelWindowHours} h`;
	if (b.status === 'pending')
		return 'It is still waiting for approval: withdrawing it is not billed.';
	if (!charge.billable)
		return `This cancellation will not be billed (${
			b.cancelWindowHours ? `more than ${window} before the start` : 'it is before the start'
		}). The time is freed for others.`;
	if (b.startAt <= now)
		return 'This cancellation will be billed as booked (the booking has started). The rest of the time is freed for others.';
	return `This cancellation will be billed as booked (inside ${window} of the start). The time is freed for others.`;
}
