import { describe, expect, it } from 'vitest';
import { weeklySlots } from './bookings';
import {
	boxBlockers,
	checkBooking,
	holdOverlaps,
	missingTimeReason,
	spanIsFree,
	minutesPerIsoWeek,
	purgeEnd,
	quotaSpan,
	refusalStatus,
	type BookingRequest,
	type RuleContext
} from './booking-rules';

const tz = 'Europe/Berlin';
// A fixed "now": Tuesday 1 December 2026, 08:00 in Berlin (CET, UTC+1).
const now = new Date('2026-12-01T07:00:00Z');
const at = (iso: string) => new Date(iso);

function context(overrides: Partial<RuleContext> = {}): RuleContext {
	return {
		now,
		tz,
		box: {
			status: 'in_service',
			atmosphereState: 'ok',
			slotStepMin: 15,
			minLengthMin: 30,
			maxLengthMin: 240,
			horizonDays: 28,
			weeklyQuotaMin: 720,
			purgeMin: 30,
			excludedClasses: ['halogenated_solvents'],
			requiredModules: [{ id: 1, name: 'General box use' }]
		},
		certifications: [
			{ moduleId: 1, grantedAt: at('2026-01-10T09:00:00Z'), expiresAt: at('2027-01-10T09:00:00Z') }
		],
		others: [],
		outages: [],
		userBookings: [],
		...overrides
	};
}

// Wednesday 2 December 2026, 10:00–12:00 Berlin.
const request = (overrides: Partial<BookingRequest> = {}): BookingRequest => ({
	start: at('2026-12-02T09:00:00Z'),
	end: at('2026-12-02T11:00:00Z'),
	volatileSolvents: false,
	chemicalClasses: [],
	...overrides
});

const codes = (req: BookingRequest, ctx: RuleContext) =>
	checkBooking(req, ctx).reasons.map((r) => r.code);

describe('a booking that breaks no rule', () => {
	it('has no reasons and no conflicts', () => {
		expect(checkBooking(request(), context())).toEqual({
			reasons: [],
			conflicts: [],
			blockedUntil: at('2026-12-02T11:00:00Z')
		});
		expect(refusalStatus(checkBooking(request(), context()))).toBeNull();
	});
});

describe('training', () => {
	it('refuses without the required certification', () => {
		expect(codes(request(), context({ certifications: [] }))).toEqual(['certification_missing']);
	});

	it('treats an expired certification as missing', () => {
		const expired = [
			{ moduleId: 1, grantedAt: at('2025-01-01T00:00:00Z'), expiresAt: at('2026-06-01T00:00:00Z') }
		];
		expect(codes(request(), context({ certifications: expired }))).toEqual([
			'certification_missing'
		]);
	});

	it('refuses when the certification expires before the booking ends', () => {
		const expiring = [
			{ moduleId: 1, grantedAt: at('2025-12-02T10:00:00Z'), expiresAt: at('2026-12-02T10:00:00Z') }
		];
		const result = checkBooking(request(), context({ certifications: expiring }));
		expect(result.reasons.map((r) => r.code)).toEqual(['certification_expires']);
		expect(result.reasons[0].message).toContain('Wed 2 Dec, 11:00'); // shown in Berlin time
	});
});

describe('box state', () => {
	it('refuses an out-of-service box and one in atmosphere alarm', () => {
		const box = {
			...context().box,
			status: 'out_of_service' as const,
			atmosphereState: 'alarm' as const
		};
		expect(codes(request(), context({ box }))).toEqual(['box_out_of_service', 'atmosphere_alarm']);
	});

	it('refuses a slot inside an outage as out of service (422, not a race)', () => {
		const outages = [
			{
				id: 9,
				startAt: at('2026-12-02T10:00:00Z'),
				endAt: at('2026-12-02T13:00:00Z'),
				reason: 'glove change'
			}
		];
		const result = checkBooking(request(), context({ outages }));
		expect(result.reasons.map((r) => r.code)).toEqual(['box_out_of_service']);
		expect(result.conflicts).toEqual([expect.objectContaining({ kind: 'outage', id: 9 })]);
		expect(refusalStatus(result)).toBe(422);
	});
});

describe('times and lengths', () => {
	it('refuses a start in the past and one beyond the horizon', () => {
		expect(
			codes(
				request({ start: at('2026-12-01T06:00:00Z'), end: at('2026-12-01T08:00:00Z') }),
				context()
			)
		).toEqual(['start_in_past']);
		expect(
			codes(
				request({ start: at('2026-12-30T09:00:00Z'), end: at('2026-12-30T10:00:00Z') }),
				context()
			)
		).toEqual(['outside_horizon']);
	});

	it('refuses times off the slot grid', () => {
		expect(codes(request({ start: at('2026-12-02T09:10:00Z') }), context())).toEqual(['bad_step']);
	});

	it('checks the grid in wall-clock time of the facility zone (UTC+05:30)', () => {
		const box = { ...context().box, slotStepMin: 60, maxLengthMin: 240 };
		// 10:00–12:00 in Kolkata is 04:30–06:30 UTC: on a 60-minute grid locally, not in UTC.
		const req = request({ start: at('2026-12-02T04:30:00Z'), end: at('2026-12-02T06:30:00Z') });
		expect(codes(req, context({ box, tz: 'Asia/Kolkata' }))).toEqual([]);
		expect(codes(req, context({ box, tz: 'UTC' }))).toEqual(['bad_step']);
	});

	it('refuses too short and too long bookings', () => {
		expect(codes(request({ end: at('2026-12-02T09:15:00Z') }), context())).toEqual(['too_short']);
		expect(codes(request({ end: at('2026-12-02T13:15:00Z') }), context())).toEqual(['too_long']);
	});

	it('measures length in real time across the autumn daylight-saving change', () => {
		// Sun 25 Oct 2026 in Berlin: 03:00 CEST falls back to 02:00 CET. 00:30–04:00 on the
		// wall clock is 4 h 30 min of box time, over the 4 h limit.
		const ctx = context({ now: at('2026-10-20T08:00:00Z') });
		const req = request({ start: at('2026-10-24T22:30:00Z'), end: at('2026-10-25T03:00:00Z') });
		const result = checkBooking(req, ctx);
		expect(result.reasons.map((r) => r.code)).toEqual(['too_long']);
		expect(result.reasons[0].message).toContain('4 h 30 min');
		// 01:00–04:00 on the wall clock is 4 h: allowed.
		expect(
			codes(request({ start: at('2026-10-24T23:00:00Z'), end: at('2026-10-25T03:00:00Z') }), ctx)
		).toEqual([]);
	});

	it('measures length in real time across the spring change', () => {
		// Sun 29 Mar 2026: 02:00 CET jumps to 03:00 CEST; 01:00–04:00 on the wall clock is 2 h.
		const ctx = context({ now: at('2026-03-25T08:00:00Z') });
		const req = request({ start: at('2026-03-29T00:00:00Z'), end: at('2026-03-29T02:00:00Z') });
		expect(codes(req, ctx)).toEqual([]);
		// With a 150 min limit the 2 real hours fit; measured on the wall clock (3 h) they would not.
		const short = context({
			now: at('2026-03-25T08:00:00Z'),
			box: { ...ctx.box, maxLengthMin: 150 }
		});
		expect(codes(req, short)).toEqual([]);
		// And 3 real hours (01:00–05:00 on the wall clock) are refused under that limit.
		const longer = request({ start: at('2026-03-29T00:00:00Z'), end: at('2026-03-29T03:00:00Z') });
		expect(codes(longer, short)).toEqual(['too_long']);
	});
});

describe('weekly quota (ISO weeks in the facility zone)', () => {
	it('counts minutes per ISO week, splitting at Monday 00:00 local time', () => {
		// Sun 6 Dec 2026 22:00 – Mon 7 Dec 02:00 Berlin.
		const weeks = minutesPerIsoWeek(at('2026-12-06T21:00:00Z'), at('2026-12-07T01:00:00Z'), tz);
		expect(Object.fromEntries(weeks)).toEqual({ '2026-W49': 120, '2026-W50': 120 });
	});

	it('refuses when a week would go over the quota', () => {
		// 11 h already booked this week (Mon 30 Nov – Sun 6 Dec).
		const userBookings = [
			{ startAt: at('2026-11-30T08:00:00Z'), endAt: at('2026-11-30T12:00:00Z') },
			{ startAt: at('2026-12-01T08:00:00Z'), endAt: at('2026-12-01T12:00:00Z') },
			{ startAt: at('2026-12-03T08:00:00Z'), endAt: at('2026-12-03T11:00:00Z') }
		];
		const result = checkBooking(request(), context({ userBookings }));
		expect(result.reasons.map((r) => r.code)).toEqual(['quota_exceeded']);
		expect(result.reasons[0].message).toContain('1 h left');
	});

	it('reads the user’s bookings over the whole ISO weeks the request touches', () => {
		// Sun 6 Dec 22:00 – Mon 7 Dec 02:00 Berlin: W49 and W50, Mon 30 Nov to Mon 14 Dec.
		expect(quotaSpan(at('2026-12-06T21:00:00Z'), at('2026-12-07T01:00:00Z'), tz)).toEqual({
			start: at('2026-11-29T23:00:00Z'),
			end: at('2026-12-13T23:00:00Z')
		});
		// Ending at Monday 00:00 touches nothing of the week that starts then.
		expect(quotaSpan(at('2026-12-06T21:00:00Z'), at('2026-12-06T23:00:00Z'), tz)).toEqual({
			start: at('2026-11-29T23:00:00Z'),
			end: at('2026-12-06T23:00:00Z')
		});
	});

	it('splits a booking that spans two ISO weeks and checks each week on its own', () => {
		const base = at('2026-11-30T08:00:00Z').getTime();
		const hours = (n: number, offsetDays: number) => ({
			startAt: new Date(base + offsetDays * 86_400_000),
			endAt: new Date(base + offsetDays * 86_400_000 + n * 3_600_000)
		});
		const req = request({ start: at('2026-12-06T21:00:00Z'), end: at('2026-12-07T01:00:00Z') });
		// 10 h used in W49: 2 h more in W49 makes 12 h (allowed); 2 h in W50 is fine.
		const ten = [hours(4, 0), hours(4, 1), hours(2, 2)];
		expect(codes(req, context({ userBookings: ten }))).toEqual([]);
		// 11 h used in W49: 13 h there is over; W50 alone would be fine.
		const eleven = [hours(4, 0), hours(4, 1), hours(3, 2)];
		const result = checkBooking(req, context({ userBookings: eleven }));
		expect(result.reasons.map((r) => r.code)).toEqual(['quota_exceeded']);
		expect(result.reasons[0].message).toContain('week 49');
	});
});

describe('chemical classes', () => {
	it('refuses a class the box excludes, by name', () => {
		const result = checkBooking(
			request({ chemicalClasses: ['halogenated_solvents', 'phosphines'] }),
			context()
		);
		expect(result.reasons).toEqual([
			{ code: 'excluded_chemical', message: 'Halogenated solvents may not be used in this box.' }
		]);
	});
});

describe('overlaps', () => {
	const other = (overrides = {}) => ({
		id: 5,
		startAt: at('2026-12-02T10:00:00Z'),
		endAt: at('2026-12-02T12:00:00Z'),
		blockedUntil: at('2026-12-02T12:00:00Z'),
		status: 'confirmed' as const,
		...overrides
	});

	it('gives 409 when another booking holds the slot', () => {
		const result = checkBooking(request(), context({ others: [other()] }));
		expect(result.reasons.map((r) => r.code)).toEqual(['overlaps_booking']);
		expect(result.conflicts).toEqual([
			{ kind: 'booking', id: 5, start: at('2026-12-02T10:00:00Z'), end: at('2026-12-02T12:00:00Z') }
		]);
		expect(refusalStatus(result)).toBe(409);
	});

	it('treats a pending approval as a hold', () => {
		expect(codes(request(), context({ others: [other({ status: 'pending' })] }))).toEqual([
			'overlaps_pending'
		]);
	});

	it('allows back-to-back bookings', () => {
		const before = other({
			startAt: at('2026-12-02T07:00:00Z'),
			endAt: at('2026-12-02T09:00:00Z'),
			blockedUntil: at('2026-12-02T09:00:00Z')
		});
		expect(codes(request(), context({ others: [before] }))).toEqual([]);
	});

	it('keeps the purge time after volatile-solvent work free', () => {
		const before = other({
			startAt: at('2026-12-02T07:00:00Z'),
			endAt: at('2026-12-02T09:00:00Z'),
			blockedUntil: at('2026-12-02T09:30:00Z')
		});
		expect(codes(request(), context({ others: [before] }))).toEqual(['overlaps_purge']);
	});

	it('refuses volatile solvents when the purge would run into the next booking', () => {
		const next = other({
			startAt: at('2026-12-02T11:15:00Z'),
			endAt: at('2026-12-02T12:00:00Z'),
			blockedUntil: at('2026-12-02T12:00:00Z')
		});
		expect(codes(request({ volatileSolvents: true }), context({ others: [next] }))).toEqual([
			'overlaps_purge'
		]);
		expect(codes(request({ volatileSolvents: false }), context({ others: [next] }))).toEqual([]);
	});

	it('lists every reason together and answers 422 when a rule is broken too', () => {
		const result = checkBooking(
			request({ start: at('2026-12-02T09:05:00Z') }),
			context({ certifications: [], others: [other()] })
		);
		expect(result.reasons.map((r) => r.code)).toEqual([
			'certification_missing',
			'bad_step',
			'overlaps_booking'
		]);
		expect(refusalStatus(result)).toBe(422);
	});
});

describe('one overlap rule: a booking holds the box until its purge ends', () => {
	// Wed 2 Dec 2026: a booking 10:00–12:00 Berlin with volatile solvents holds the box to
	// 12:30 (09:00Z–11:30Z).
	const hold = { startAt: at('2026-12-02T09:00:00Z'), blockedUntil: at('2026-12-02T11:30:00Z') };
	const span = (start: string, end: string) => ({ startAt: at(start), endAt: at(end) });

	it('holdOverlaps: a span starting inside the purge buffer overlaps, one starting at its end does not', () => {
		expect(holdOverlaps(hold, span('2026-12-02T11:15:00Z', '2026-12-02T13:00:00Z'))).toBe(true);
		expect(holdOverlaps(hold, span('2026-12-02T11:30:00Z', '2026-12-02T13:00:00Z'))).toBe(false);
		// Before the hold, touching its start, is clear too; covering it is not.
		expect(holdOverlaps(hold, span('2026-12-02T07:00:00Z', '2026-12-02T09:00:00Z'))).toBe(false);
		expect(holdOverlaps(hold, span('2026-12-02T07:00:00Z', '2026-12-02T14:00:00Z'))).toBe(true);
	});

	it('purgeEnd adds the box’s purge time only when volatile solvents are declared', () => {
		const end = at('2026-12-02T11:00:00Z');
		expect(purgeEnd({ end, volatileSolvents: true }, 30)).toEqual(at('2026-12-02T11:30:00Z'));
		expect(purgeEnd({ end, volatileSolvents: false }, 30)).toEqual(end);
	});

	it('returns the purge end it checked, which is what the booking stores', () => {
		expect(checkBooking(request({ volatileSolvents: true }), context()).blockedUntil).toEqual(
			at('2026-12-02T11:30:00Z')
		);
		expect(checkBooking(request(), context()).blockedUntil).toEqual(at('2026-12-02T11:00:00Z'));
	});

	it('refuses a booking whose purge buffer an outage would overlap, and only then', () => {
		const outage = (start: string) => [
			{ id: 7, startAt: at(start), endAt: at('2026-12-02T14:00:00Z'), reason: 'regeneration' }
		];
		const during = context({ outages: outage('2026-12-02T11:15:00Z') });
		expect(codes(request({ volatileSolvents: true }), during)).toEqual(['box_out_of_service']);
		expect(codes(request({ volatileSolvents: false }), during)).toEqual([]);
		const after = context({ outages: outage('2026-12-02T11:30:00Z') });
		expect(codes(request({ volatileSolvents: true }), after)).toEqual([]);
	});

	it('takes what the server read up to the longest purge and keeps what reaches this box’s own', () => {
		// The server reads bookings starting up to 12 h after the end; with a 30 min purge only
		// one starting before 11:30Z collides.
		const next = (start: string) => ({
			id: 6,
			startAt: at(start),
			endAt: at('2026-12-02T13:00:00Z'),
			blockedUntil: at('2026-12-02T13:00:00Z'),
			status: 'confirmed' as const
		});
		const volatile = request({ volatileSolvents: true });
		expect(codes(volatile, context({ others: [next('2026-12-02T11:30:00Z')] }))).toEqual([]);
		const result = checkBooking(volatile, context({ others: [next('2026-12-02T11:15:00Z')] }));
		expect(result.reasons.map((r) => r.code)).toEqual(['overlaps_purge']);
		expect(result.conflicts).toEqual([
			{ kind: 'purge', id: 6, start: at('2026-12-02T11:00:00Z'), end: at('2026-12-02T11:30:00Z') }
		]);
	});
});

describe('moving a booking (PATCH /api/bookings/:id)', () => {
	// The booking under way: it started 07:00 Berlin (06:00Z), before "now" (08:00 Berlin).
	const running = { start: at('2026-12-01T06:00:00Z') };

	it('lets a booking under way keep its start while its end changes', () => {
		const longer = request({ start: running.start, end: at('2026-12-01T09:00:00Z') });
		expect(codes(longer, context())).toEqual(['start_in_past']);
		expect(codes(longer, context({ current: running }))).toEqual([]);
	});

	it('still refuses moving the start into the past', () => {
		const earlier = request({
			start: at('2026-12-01T05:00:00Z'),
			end: at('2026-12-01T07:00:00Z')
		});
		expect(codes(earlier, context({ current: running }))).toEqual(['start_in_past']);
	});
});

describe('spanIsFree: what a watch waits for', () => {
	const span = { startAt: at('2026-12-02T09:00:00Z'), endAt: at('2026-12-02T11:00:00Z') };

	it('is free with nothing near, or a hold that ends as the span starts', () => {
		expect(spanIsFree(span, [], [])).toBe(true);
		const before = { startAt: at('2026-12-02T07:00:00Z'), blockedUntil: span.startAt };
		expect(spanIsFree(span, [before], [])).toBe(true);
	});

	it('is taken by a purge buffer reaching into it, or by an outage', () => {
		const purge = {
			startAt: at('2026-12-02T07:00:00Z'),
			blockedUntil: at('2026-12-02T09:15:00Z')
		};
		expect(spanIsFree(span, [purge], [])).toBe(false);
		const outage = { startAt: at('2026-12-02T10:45:00Z'), endAt: at('2026-12-02T14:00:00Z') };
		expect(spanIsFree(span, [], [outage])).toBe(false);
	});
});

describe('boxBlockers: why the box picker marks a box', () => {
	const box = {
		status: 'in_service' as const,
		atmosphereState: 'ok' as const,
		requiredModules: [
			{ id: 1, name: 'General box use' },
			{ id: 2, name: 'Antechamber transfers' }
		]
	};

	it('names each required module not held, and how it lapsed', () => {
		expect(boxBlockers(box, new Map([[1, 'current']]))).toEqual([
			'Needs the “Antechamber transfers” certification.'
		]);
		expect(
			boxBlockers(
				box,
				new Map([
					[1, 'expired'],
					[2, 'revoked']
				])
			)
		).toEqual([
			'Needs the “General box use” certification (expired).',
			'Needs the “Antechamber transfers” certification (revoked).'
		]);
	});

	it('is empty when every module is held (expiring still counts) and the box can be booked', () => {
		expect(
			boxBlockers(
				box,
				new Map([
					[1, 'current'],
					[2, 'expiring']
				])
			)
		).toEqual([]);
	});

	it('says when the box is out of service or in alarm', () => {
		const held = new Map([
			[1, 'current' as const],
			[2, 'current' as const]
		]);
		expect(boxBlockers({ ...box, status: 'out_of_service' }, held)).toEqual([
			'The box is out of service.'
		]);
		expect(boxBlockers({ ...box, atmosphereState: 'alarm' }, held)).toEqual([
			'The box is in atmosphere alarm.'
		]);
	});
});

describe('weeklySlots (bookings.ts): a series on the facility wall clock', () => {
	it('keeps 09:00–11:00 across the autumn change, so the instants move by an hour', () => {
		// Tue 20 Oct 2026 09:00 CEST (UTC+2); summer time ends Sun 25 Oct.
		const slots = weeklySlots(at('2026-10-20T07:00:00Z'), at('2026-10-20T09:00:00Z'), 3, tz);
		expect(slots.map((s) => [s.start.toISOString(), s.end.toISOString(), s.missing])).toEqual([
			['2026-10-20T07:00:00.000Z', '2026-10-20T09:00:00.000Z', false],
			['2026-10-27T08:00:00.000Z', '2026-10-27T10:00:00.000Z', false],
			['2026-11-03T08:00:00.000Z', '2026-11-03T10:00:00.000Z', false]
		]);
	});

	it('marks the week whose time the spring change skips', () => {
		// Sun 21 Mar 2027 02:30–03:30 CET; on Sun 28 Mar 02:00–03:00 does not exist.
		const slots = weeklySlots(at('2027-03-21T01:30:00Z'), at('2027-03-21T02:30:00Z'), 2, tz);
		expect(slots.map((s) => s.missing)).toEqual([false, true]);
		expect(missingTimeReason(slots[1], tz).code).toBe('no_such_time');
		expect(missingTimeReason(slots[1], tz).message).toContain('Sun 28 Mar');
	});

	it('gives one slot for one week', () => {
		expect(weeklySlots(at('2026-12-02T09:00:00Z'), at('2026-12-02T11:00:00Z'), 1, tz)).toEqual([
			{ start: at('2026-12-02T09:00:00Z'), end: at('2026-12-02T11:00:00Z'), missing: false }
		]);
	});
});
