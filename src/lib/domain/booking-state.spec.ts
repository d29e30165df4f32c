import { describe, expect, it } from 'vitest';
import {
	cancellationCharge,
	cancellationConsequence,
	holderStatus,
	mayCancel,
	type HeldBooking
} from './booking-state';

const tz = 'Europe/Berlin';
const at = (iso: string) => new Date(iso);

const booking = (over: Partial<HeldBooking> = {}): HeldBooking => ({
	status: 'confirmed',
	startAt: at('2026-03-10T09:00:00Z'),
	endAt: at('2026-03-10T11:00:00Z'),
	checkInAt: null,
	checkOutAt: null,
	cancelWindowHours: 24,
	...over
});

describe('holderStatus', () => {
	it('reads the status until its holder checks in, then the check-in and check-out times', () => {
		expect(holderStatus(booking(), tz)).toBe('Confirmed');
		expect(holderStatus(booking({ checkInAt: at('2026-03-10T08:58:00Z') }), tz)).toBe(
			'Checked in 09:58'
		);
		expect(
			holderStatus(
				booking({
					checkInAt: at('2026-03-10T08:58:00Z'),
					checkOutAt: at('2026-03-10T10:20:00Z')
				}),
				tz
			)
		).toBe('Checked out 11:20');
		expect(holderStatus(booking({ status: 'pending' }), tz)).toBe('Waiting for approval');
	});
});

describe('mayCancel', () => {
	const now = at('2026-03-10T10:00:00Z');
	it('is open until the end, unless its holder already checked out', () => {
		expect(mayCancel(booking(), now)).toBe(true);
		expect(mayCancel(booking({ checkOutAt: at('2026-03-10T09:50:00Z') }), now)).toBe(false);
		expect(mayCancel(booking(), at('2026-03-10T11:00:00Z'))).toBe(false);
		expect(mayCancel(booking({ status: 'cancelled' }), now)).toBe(false);
	});
});

describe('cancellationCharge (usage.ts rule for a cancellation by the booker now)', () => {
	it('bills inside the window and after the start, not before the window', () => {
		expect(cancellationCharge(booking(), at('2026-03-08T09:00:00Z')).billable).toBe(false);
		expect(cancellationCharge(booking(), at('2026-03-09T09:00:01Z')).billable).toBe(true);
		expect(cancellationCharge(booking(), at('2026-03-10T09:30:00Z')).billable).toBe(true);
	});

	it('never bills withdrawing a booking still waiting for approval', () => {
		expect(
			cancellationCharge(booking({ status: 'pending' }), at('2026-03-10T08:00:00Z')).billable
		).toBe(false);
	});
});

describe('cancellationConsequence', () => {
	it('says whether it will be billed and why', () => {
		expect(cancellationConsequence(booking(), at('2026-03-10T08:00:00Z'))).toBe(
			'This cancellation will be billed as booked (inside 24 h of the start). The time is freed for others.'
		);
		expect(cancellationConsequence(booking(), at('2026-03-01T08:00:00Z'))).toMatch(
			/^This cancellation will not be billed \(more than 24 h before the start\)/
		);
		expect(cancellationConsequence(booking(), at('2026-03-10T09:30:00Z'))).toMatch(
			/billed as booked \(the booking has started\)/
		);
		expect(
			cancellationConsequence(booking({ cancelWindowHours: 0 }), at('2026-03-10T08:00:00Z'))
		).toMatch(/not be billed \(it is before the start\)/);
		expect(
			cancellationConsequence(booking({ status: 'pending' }), at('2026-03-10T08:00:00Z'))
		).toMatch(/waiting for approval: withdrawing it is not billed/);
	});
});
