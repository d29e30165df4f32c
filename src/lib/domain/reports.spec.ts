import { describe, expect, it } from 'vitest';
import {
	INSPECT_AFTER_BOOKED_HOURS,
	INSPECTION_INTERVAL_DAYS,
	bookingRates,
	gloveWear,
	hoursByGroup,
	hoursWithin,
	isLateCancellation,
	mergeIntervals,
	outageHoursByKind,
	parseReportWeeks,
	reportRange,
	splitByWeek,
	utilisation,
	weekOf,
	weeksCovering,
	type ReportBooking,
	type ReportOutage
} from './reports';

// No published source: the week arithmetic follows ISO 8601 weeks on the Europe/Berlin clock
// (summer time 2026 starts Sun 29 Mar 02:00 CET and ends Sun 25 Oct 03:00 CEST, EU rule);
// the rates and the glove thresholds are common practice (REFERENCES.md, "Gloves"). Every
// expected value below is worked out by hand, not by the code under test.

const tz = 'Europe/Berlin';
const at = (iso: string) => new Date(iso);
const iso = (d: Date) => d.toISOString();

function booking(o: Partial<ReportBooking> & { startAt: Date; endAt: Date }): ReportBooking {
	return {
		boxId: 1,
		groupId: null,
		status: 'confirmed',
		cancelCause: null,
		cancelledAt: null,
		...o
	};
}
const outage = (
	boxId: number,
	kind: ReportOutage['kind'],
	start: string,
	end: string
): ReportOutage => ({ boxId, kind, startAt: at(start), endAt: at(end) });

// ISO weeks 12 and 13 of 2026 on the Berlin clock:
// W12 Mon 16 Mar 00:00 CET = 15 Mar 23:00Z … W13 Mon 23 Mar 00:00 CET = 22 Mar 23:00Z …
// W14 Mon 30 Mar 00:00 CEST = 29 Mar 22:00Z.
const w12 = at('2026-03-15T23:00:00Z');
const w13 = at('2026-03-22T23:00:00Z');
const w14 = at('2026-03-29T22:00:00Z');
const range = { from: w12, to: w14 };

describe('ISO weeks in the facility zone', () => {
	it('finds the week of an instant, with its real hours', () => {
		// 2 Mar 2026 is day 61; 1 Jan 2026 is a Thursday, so W01 starts Mon 29 Dec 2025 and
		// 2 Mar is (60 + 3) / 7 = 9 weeks later: W10. 168 hours.
		expect(weekOf(at('2026-03-04T12:00:00Z'), tz)).toEqual({
			key: '2026-W10',
			start: at('2026-03-01T23:00:00Z'),
			end: at('2026-03-08T23:00:00Z'),
			hours: 168,
			label: '2–8 Mar'
		});
	});

	it('has 167 hours in the week summer time starts and 169 in the week it ends', () => {
		const spring = weekOf(at('2026-03-25T12:00:00Z'), tz);
		expect(spring).toMatchObject({ key: '2026-W13', label: '23–29 Mar', hours: 167 });
		expect([iso(spring.start), iso(spring.end)]).toEqual([iso(w13), iso(w14)]);
		// 19 Oct 2026 is day 292: (291 + 3) / 7 = 42 weeks after W01, so W43. Mon 19 Oct 00:00
		// CEST = 18 Oct 22:00Z; Mon 26 Oct 00:00 CET = 25 Oct 23:00Z: 169 hours.
		const autumn = weekOf(at('2026-10-21T12:00:00Z'), tz);
		expect(autumn).toMatchObject({ key: '2026-W43', label: '19–25 Oct', hours: 169 });
		expect(iso(autumn.start)).toBe('2026-10-18T22:00:00.000Z');
		expect(iso(autumn.end)).toBe('2026-10-25T23:00:00.000Z');
	});

	it('names a week by its ISO week year across New Year', () => {
		// 2026 starts on a Thursday, so it has 53 ISO weeks; Sun 3 Jan 2027 is still in W53.
		expect(weekOf(at('2027-01-03T12:00:00Z'), tz)).toMatchObject({
			key: '2026-W53',
			label: '28 Dec–3 Jan',
			hours: 168
		});
		expect(weekOf(at('2027-01-04T00:30:00Z'), tz).key).toBe('2027-W01');
	});

	it('lists the whole weeks a range touches, the end excluded', () => {
		expect(
			weeksCovering(at('2026-03-18T10:00:00Z'), at('2026-04-01T00:00:00Z'), tz).map((w) => w.key)
		).toEqual(['2026-W12', '2026-W13', '2026-W14']);
		expect(weeksCovering(w12, w13, tz).map((w) => w.key)).toEqual(['2026-W12']);
		expect(weeksCovering(w12, w12, tz)).toEqual([]);
	});

	it('reports the last n weeks, ending with the current one', () => {
		// Wed 25 Mar 2026 is in W13; eight weeks back to W06, which starts Mon 2 Feb 00:00 CET.
		const r = reportRange(8, at('2026-03-25T12:00:00Z'), tz);
		expect([iso(r.from), iso(r.to)]).toEqual(['2026-02-01T23:00:00.000Z', iso(w14)]);
		const weeks = weeksCovering(r.from, r.to, tz);
		expect(weeks.map((w) => w.key)).toEqual([
			'2026-W06',
			'2026-W07',
			'2026-W08',
			'2026-W09',
			'2026-W10',
			'2026-W11',
			'2026-W12',
			'2026-W13'
		]);
		// Monday 00:00 itself belongs to the week it starts.
		expect(iso(reportRange(1, w13, tz).from)).toBe(iso(w13));
	});

	it('takes 4, 8 or 12 weeks and falls back to 8', () => {
		expect(parseReportWeeks('4')).toBe(4);
		expect(parseReportWeeks('12')).toBe(12);
		for (const bad of [null, undefined, '', '5', '0', '-4', 'eight', '8.5', '1e1'])
			expect(parseReportWeeks(bad)).toBe(8);
	});
});

describe('intervals', () => {
	it('splits a booking across a week boundary into both weeks', () => {
		// Sun 22 Mar 22:00 CET → Mon 23 Mar 02:00 CET: 2 h in W12, 2 h in W13.
		expect(
			splitByWeek({ startAt: at('2026-03-22T21:00:00Z'), endAt: at('2026-03-23T01:00:00Z') }, tz)
		).toEqual([
			{ week: '2026-W12', hours: 2 },
			{ week: '2026-W13', hours: 2 }
		]);
	});

	it('counts real hours on the night the clocks go forward', () => {
		// 01:00 CET → 04:00 CEST reads as three hours on the wall but is two.
		expect(
			splitByWeek({ startAt: at('2026-03-29T00:00:00Z'), endAt: at('2026-03-29T02:00:00Z') }, tz)
		).toEqual([{ week: '2026-W13', hours: 2 }]);
		expect(splitByWeek({ startAt: w13, endAt: w13 }, tz)).toEqual([]);
	});

	it('clips to a range and joins overlaps', () => {
		const i = { startAt: at('2026-03-15T21:00:00Z'), endAt: at('2026-03-16T01:00:00Z') };
		expect(hoursWithin(i, w12, w14)).toBe(2);
		expect(hoursWithin(i, w13, w14)).toBe(0);
		expect(
			mergeIntervals([
				{ startAt: at('2026-03-18T10:00:00Z'), endAt: at('2026-03-18T14:00:00Z') },
				{ startAt: at('2026-03-18T08:00:00Z'), endAt: at('2026-03-18T12:00:00Z') },
				{ startAt: at('2026-03-18T14:00:00Z'), endAt: at('2026-03-18T15:00:00Z') },
				{ startAt: at('2026-03-19T08:00:00Z'), endAt: at('2026-03-19T09:00:00Z') }
			]).map((m) => [iso(m.startAt), iso(m.endAt)])
		).toEqual([
			['2026-03-18T08:00:00.000Z', '2026-03-18T15:00:00.000Z'],
			['2026-03-19T08:00:00.000Z', '2026-03-19T09:00:00.000Z']
		]);
	});
});

describe('utilisation per box and week', () => {
	const weeks = weeksCovering(w12, w14, tz);
	const list = [
		// Box 1. Across the W12/W13 boundary: 2 h + 2 h.
		booking({ startAt: at('2026-03-22T21:00:00Z'), endAt: at('2026-03-23T01:00:00Z') }),
		booking({
			status: 'completed',
			startAt: at('2026-03-24T08:00:00Z'),
			endAt: at('2026-03-24T12:00:00Z')
		}),
		// A no-show held the box: 2 h.
		booking({
			status: 'no_show',
			startAt: at('2026-03-25T09:00:00Z'),
			endAt: at('2026-03-25T11:00:00Z')
		}),
		// Neither a cancellation nor a booking waiting for approval held it.
		booking({
			status: 'cancelled',
			cancelCause: 'user',
			cancelledAt: at('2026-03-26T08:00:00Z'),
			startAt: at('2026-03-26T09:00:00Z'),
			endAt: at('2026-03-26T13:00:00Z')
		}),
		booking({
			status: 'pending',
			startAt: at('2026-03-27T09:00:00Z'),
			endAt: at('2026-03-27T10:00:00Z')
		}),
		// The night the clocks go forward: 2 real hours.
		booking({ startAt: at('2026-03-29T00:00:00Z'), endAt: at('2026-03-29T02:00:00Z') }),
		// Box 2: 8 h on Mon 16 Mar.
		booking({
			boxId: 2,
			status: 'completed',
			startAt: at('2026-03-16T08:00:00Z'),
			endAt: at('2026-03-16T16:00:00Z')
		})
	];
	const outs = [
		// Leak and regeneration overlap: 08:00–14:00 out of service, 6 h, counted once.
		outage(1, 'leak', '2026-03-18T08:00:00Z', '2026-03-18T12:00:00Z'),
		outage(1, 'regeneration', '2026-03-18T10:00:00Z', '2026-03-18T14:00:00Z'),
		// 2 h before W14 starts (29 Mar 22:00Z), 4 h after, outside the weeks asked for.
		outage(1, 'glove_change', '2026-03-29T20:00:00Z', '2026-03-30T02:00:00Z')
	];

	it('divides booked hours by the real hours of each week', () => {
		const [one, two] = utilisation([1, 2], list, outs, weeks, tz);
		expect(one.cells.map((c) => [c.week, c.bookedHours, c.outageHours, c.weekHours])).toEqual([
			['2026-W12', 2, 6, 168],
			['2026-W13', 10, 2, 167]
		]);
		expect(one.cells[0].share).toBeCloseTo(2 / 168, 12); // 0.011905
		expect(one.cells[1].share).toBeCloseTo(10 / 167, 12); // 0.059880
		expect(one).toMatchObject({ bookedHours: 12, outageHours: 8, hours: 335 });
		expect(one.share).toBeCloseTo(12 / 335, 12); // 0.035821
		expect(two.cells.map((c) => c.bookedHours)).toEqual([8, 0]);
		expect(two.share).toBeCloseTo(8 / 335, 12);
	});

	it('counts a no-show’s slot booked again by someone else once', () => {
		// No-show 09:00–13:00; the freed slot rebooked 10:00–12:00: 4 h held, not 6.
		const [one] = utilisation(
			[1],
			[
				booking({
					status: 'no_show',
					startAt: at('2026-03-24T09:00:00Z'),
					endAt: at('2026-03-24T13:00:00Z')
				}),
				booking({ startAt: at('2026-03-24T10:00:00Z'), endAt: at('2026-03-24T12:00:00Z') })
			],
			[],
			weeks,
			tz
		);
		expect(one.cells.map((c) => c.bookedHours)).toEqual([0, 4]);
	});

	it('gives a box with nothing booked zero, not a gap', () => {
		const [three] = utilisation([3], list, outs, weeks, tz);
		expect(three.cells.map((c) => [c.bookedHours, c.share])).toEqual([
			[0, 0],
			[0, 0]
		]);
	});
});

describe('late cancellations', () => {
	const start = at('2026-03-19T08:00:00Z');
	const cancelled = (
		cancelledAt: Date | null,
		cancelCause: 'user' | 'manager' | 'outage' = 'user'
	) =>
		booking({
			status: 'cancelled',
			cancelCause,
			cancelledAt,
			startAt: start,
			endAt: at('2026-03-19T12:00:00Z')
		});

	it('are the booker’s, later than start − window', () => {
		expect(isLateCancellation(cancelled(at('2026-03-19T02:00:00Z')), 24)).toBe(true); // 6 h before
		expect(isLateCancellation(cancelled(at('2026-03-19T09:00:00Z')), 24)).toBe(true); // after start
		expect(isLateCancellation(cancelled(at('2026-03-18T08:00:00Z')), 24)).toBe(false); // exactly 24 h
		expect(isLateCancellation(cancelled(at('2026-03-18T08:00:01Z')), 24)).toBe(true);
		expect(isLateCancellation(cancelled(at('2026-03-17T08:00:00Z')), 24)).toBe(false);
		expect(isLateCancellation(cancelled(null), 24)).toBe(false); // nothing shows it was late
		expect(isLateCancellation(cancelled(at('2026-03-19T07:00:00Z'), 'manager'), 24)).toBe(false);
		expect(isLateCancellation(cancelled(at('2026-03-19T07:00:00Z'), 'outage'), 24)).toBe(false);
		expect(isLateCancellation(cancelled(at('2026-03-19T07:00:00Z')), 0)).toBe(false);
		// With no window, cancelling at the start is still late (as usage.ts bills it).
		expect(isLateCancellation(cancelled(start), 0)).toBe(true);
	});
});

describe('hours per group', () => {
	const boxes = [
		{ id: 1, cancelWindowHours: 24 },
		{ id: 2, cancelWindowHours: 48 }
	];
	const list = [
		// Group 10 on box 1: 3 h booked, 2 h no-show, 4 h cancelled 6 h before the start (late).
		booking({
			groupId: 10,
			startAt: at('2026-03-17T08:00:00Z'),
			endAt: at('2026-03-17T11:00:00Z')
		}),
		booking({
			groupId: 10,
			status: 'no_show',
			startAt: at('2026-03-18T14:00:00Z'),
			endAt: at('2026-03-18T16:00:00Z')
		}),
		booking({
			groupId: 10,
			status: 'cancelled',
			cancelCause: 'user',
			cancelledAt: at('2026-03-19T02:00:00Z'),
			startAt: at('2026-03-19T08:00:00Z'),
			endAt: at('2026-03-19T12:00:00Z')
		}),
		// Cancelled two days ahead: in time, not billed.
		booking({
			groupId: 10,
			status: 'cancelled',
			cancelCause: 'user',
			cancelledAt: at('2026-03-18T08:00:00Z'),
			startAt: at('2026-03-20T08:00:00Z'),
			endAt: at('2026-03-20T12:00:00Z')
		}),
		// Cancelled for an outage: never counts, however late.
		booking({
			groupId: 10,
			status: 'cancelled',
			cancelCause: 'outage',
			cancelledAt: at('2026-03-21T08:30:00Z'),
			startAt: at('2026-03-21T08:00:00Z'),
			endAt: at('2026-03-21T12:00:00Z')
		}),
		// Group 20 on box 2 (48 h window): cancelled 24 h before, which is late there: 2 h.
		booking({
			boxId: 2,
			groupId: 20,
			status: 'cancelled',
			cancelCause: 'user',
			cancelledAt: at('2026-03-23T08:00:00Z'),
			startAt: at('2026-03-24T08:00:00Z'),
			endAt: at('2026-03-24T10:00:00Z')
		}),
		// Sun 15 Mar 22:00 CET → Mon 16 Mar 02:00 CET: only the 2 h after 00:00 are in range.
		booking({
			boxId: 2,
			groupId: 20,
			status: 'completed',
			startAt: at('2026-03-15T21:00:00Z'),
			endAt: at('2026-03-16T01:00:00Z')
		}),
		booking({
			boxId: 2,
			groupId: 20,
			status: 'cancelled',
			cancelCause: 'manager',
			cancelledAt: at('2026-03-25T07:00:00Z'),
			startAt: at('2026-03-25T08:00:00Z'),
			endAt: at('2026-03-25T12:00:00Z')
		}),
		booking({
			boxId: 2,
			groupId: 20,
			status: 'pending',
			startAt: at('2026-03-26T08:00:00Z'),
			endAt: at('2026-03-26T12:00:00Z')
		}),
		// A booker without a group: 1.5 h.
		booking({
			status: 'completed',
			startAt: at('2026-03-25T08:00:00Z'),
			endAt: at('2026-03-25T09:30:00Z')
		})
	];

	it('adds late cancellations to booked hours and never outage cancellations', () => {
		expect(hoursByGroup(list, boxes, range)).toEqual([
			{ groupId: 10, bookedHours: 5, lateCancelledHours: 4, billedHours: 9, bookings: 3 },
			{ groupId: 20, bookedHours: 2, lateCancelledHours: 2, billedHours: 4, bookings: 2 },
			{ groupId: null, bookedHours: 1.5, lateCancelledHours: 0, billedHours: 1.5, bookings: 1 }
		]);
	});

	it('is empty with nothing billed', () => {
		expect(hoursByGroup(list, boxes, { from: w14, to: at('2026-04-05T22:00:00Z') })).toEqual([]);
	});
});

describe('no-show and late-cancellation rates', () => {
	const boxes = [
		{ id: 1, cancelWindowHours: 24 },
		{ id: 2, cancelWindowHours: 24 },
		{ id: 3, cancelWindowHours: 24 }
	];
	const now = at('2026-03-25T12:00:00Z');
	const day = (d: number, h = 8) =>
		at(`2026-03-${String(d).padStart(2, '0')}T${String(h).padStart(2, '0')}:00:00Z`);
	const on = (boxId: number, d: number, o: Partial<ReportBooking> = {}): ReportBooking =>
		booking({ boxId, startAt: day(d), endAt: day(d, 10), ...o });
	const list = [
		on(1, 17, { status: 'completed' }),
		on(1, 18, { status: 'completed' }),
		on(1, 19, { status: 'no_show' }),
		on(1, 24), // confirmed, started before now: due
		on(1, 26), // confirmed, still ahead: not due
		on(1, 20, { status: 'cancelled', cancelCause: 'user', cancelledAt: day(20, 6) }), // late
		on(1, 21, { status: 'cancelled', cancelCause: 'user', cancelledAt: day(18) }), // in time
		on(1, 22, { status: 'cancelled', cancelCause: 'outage', cancelledAt: day(22, 7) }),
		on(1, 23, { status: 'cancelled', cancelCause: 'manager', cancelledAt: day(23, 7) }),
		on(1, 27, { status: 'pending' }),
		on(1, 14, { status: 'no_show' }), // starts before the range: not counted
		on(2, 16, { status: 'no_show' }),
		on(2, 17, { status: 'completed' }),
		on(2, 18, { status: 'cancelled', cancelCause: 'user', cancelledAt: day(18, 9) }) // after start
	];

	it('counts per box and overall', () => {
		const { byBox, overall } = bookingRates(list, boxes, range, now);
		// Box 1: due = 2 completed + 1 no-show + 1 confirmed in the past = 4; 1 no-show → 1/4.
		// Bookings = 8 (all but the outage and manager cancellations); 1 late → 1/8.
		expect(byBox[0]).toEqual({
			boxId: 1,
			due: 4,
			noShows: 1,
			noShowRate: 0.25,
			bookings: 8,
			lateCancellations: 1,
			lateCancellationRate: 0.125
		});
		// Box 2: 1 no-show of 2 due; 1 late of 3.
		expect(byBox[1]).toMatchObject({ due: 2, noShows: 1, bookings: 3, lateCancellations: 1 });
		expect(byBox[1].noShowRate).toBe(0.5);
		expect(byBox[1].lateCancellationRate).toBeCloseTo(1 / 3, 12);
		// A box with no bookings has no rate, rather than 0 %.
		expect(byBox[2]).toMatchObject({ due: 0, noShowRate: null, lateCancellationRate: null });
		// Overall: 2 no-shows of 6 due; 2 late of 11.
		expect(overall).toMatchObject({ due: 6, noShows: 2, bookings: 11, lateCancellations: 2 });
		expect(overall.noShowRate).toBeCloseTo(1 / 3, 12);
		expect(overall.lateCancellationRate).toBeCloseTo(2 / 11, 12);
	});
});

describe('outage hours by kind', () => {
	it('clips to the range, keeps kinds apart and counts overlaps of one kind once', () => {
		const list = [
			outage(1, 'leak', '2026-03-18T08:00:00Z', '2026-03-18T12:00:00Z'),
			outage(1, 'regeneration', '2026-03-18T10:00:00Z', '2026-03-18T14:00:00Z'),
			// Until W14 starts at 29 Mar 22:00Z: 2 h in range.
			outage(1, 'glove_change', '2026-03-29T20:00:00Z', '2026-03-30T02:00:00Z'),
			// From W12's start at 15 Mar 23:00Z: 2 h in range.
			outage(2, 'glove_change', '2026-03-15T20:00:00Z', '2026-03-16T01:00:00Z'),
			// 08:00–12:00 and 11:00–13:00 join to 08:00–13:00: 5 h.
			outage(2, 'leak', '2026-03-20T08:00:00Z', '2026-03-20T12:00:00Z'),
			outage(2, 'leak', '2026-03-20T11:00:00Z', '2026-03-20T13:00:00Z')
		];
		const rows = outageHoursByKind(list, [1, 2], range);
		expect(rows.map((r) => [r.kind, r.hours, r.byBox.map((b) => b.hours)])).toEqual([
			['glove_change', 4, [2, 2]],
			['regeneration', 4, [4, 0]],
			['leak', 9, [4, 5]],
			['sensor', 0, [0, 0]],
			['atmosphere', 0, [0, 0]],
			['other', 0, [0, 0]]
		]);
	});
});

describe('glove wear', () => {
	const now = at('2026-03-25T12:00:00Z');
	const b = (status: ReportBooking['status'], start: string, end: string) => ({
		status,
		startAt: at(start),
		endAt: at(end)
	});
	const month = [
		b('completed', '2026-03-10T08:00:00Z', '2026-03-10T18:00:00Z'), // 10 h
		b('confirmed', '2026-03-12T08:00:00Z', '2026-03-12T13:00:00Z'), // 5 h, in the past
		b('no_show', '2026-03-13T08:00:00Z', '2026-03-13T11:00:00Z'), // nobody worked: 0
		b('cancelled', '2026-03-14T08:00:00Z', '2026-03-14T12:00:00Z'), // 0
		b('confirmed', '2026-03-26T08:00:00Z', '2026-03-26T10:00:00Z'), // after now: 0
		b('completed', '2026-03-01T10:00:00Z', '2026-03-01T14:00:00Z') // 2 h after a 12:00 fitting
	];

	it('adds the booked hours since fitting, up to now, and is sound when young and checked', () => {
		const w = gloveWear({
			installedAt: at('2026-03-01T12:00:00Z'),
			inspections: [],
			bookings: month,
			now
		});
		expect(w).toMatchObject({
			bookedHours: 17,
			ageDays: 24,
			lastInspectionAt: null,
			daysSinceCheck: 24,
			bookedHoursSinceCheck: 17,
			damaged: false,
			flag: 'ok',
			reasons: []
		});
		expect(iso(w.lastCheckAt)).toBe('2026-03-01T12:00:00.000Z');
	});

	it(`asks for an inspection after ${INSPECTION_INTERVAL_DAYS} days without one`, () => {
		const w = gloveWear({
			installedAt: at('2026-02-20T12:00:00Z'),
			inspections: [],
			bookings: month,
			now
		});
		// 20 Feb → 25 Mar 2026: 8 + 25 = 33 days.
		expect(w).toMatchObject({ ageDays: 33, flag: 'inspect' });
		expect(w.reasons).toEqual(['Not inspected since it was fitted 33 days ago.']);
		const checked = gloveWear({
			installedAt: at('2026-02-20T12:00:00Z'),
			inspections: [{ at: at('2026-02-23T12:00:00Z'), damaged: false, action: 'none' }],
			bookings: month,
			now
		});
		// 23 Feb → 25 Mar: 30 days exactly, which is due.
		expect(checked).toMatchObject({ daysSinceCheck: 30, flag: 'inspect' });
		expect(checked.reasons).toEqual(['Last inspected 30 days ago.']);
	});

	it(`asks for an inspection after more than ${INSPECT_AFTER_BOOKED_HOURS} booked hours since the last`, () => {
		const inspections = [{ at: at('2026-03-20T12:00:00Z'), damaged: false, action: 'none' }];
		const before = b('completed', '2026-03-02T00:00:00Z', '2026-03-03T06:00:00Z'); // 30 h
		// 20 Mar 12:00 → 22 Mar 05:00 = 41 h after the check.
		const after = b('confirmed', '2026-03-20T12:00:00Z', '2026-03-22T05:00:00Z');
		const w = gloveWear({
			installedAt: at('2026-01-01T12:00:00Z'),
			inspections,
			bookings: [before, after],
			now
		});
		expect(w).toMatchObject({
			bookedHours: 71,
			bookedHoursSinceCheck: 41,
			daysSinceCheck: 5,
			flag: 'inspect'
		});
		expect(iso(w.lastInspectionAt!)).toBe('2026-03-20T12:00:00.000Z');
		expect(w.reasons).toEqual(['41 booked hours since the last check (more than 40).']);
		// Exactly 40 h is not more than 40.
		const forty = b('confirmed', '2026-03-20T12:00:00Z', '2026-03-22T04:00:00Z');
		expect(
			gloveWear({ installedAt: at('2026-01-01T12:00:00Z'), inspections, bookings: [forty], now })
				.flag
		).toBe('ok');
	});

	it('counts a logged glove-inspection task on the box as a check of each of its gloves', () => {
		// The weekly glove check of upkeep.ts, logged on 21 Mar: no inspection on the glove itself.
		const w = gloveWear({
			installedAt: at('2026-02-20T12:00:00Z'),
			inspections: [],
			boxChecks: [at('2026-03-21T09:00:00Z')],
			bookings: month,
			now
		});
		expect(w).toMatchObject({ daysSinceCheck: 4, flag: 'ok', reasons: [] });
		expect(iso(w.lastInspectionAt!)).toBe('2026-03-21T09:00:00.000Z');
		// One logged before the glove was fitted checked another glove: it does not count.
		const older = gloveWear({
			installedAt: at('2026-02-20T12:00:00Z'),
			inspections: [],
			boxChecks: [at('2026-02-19T09:00:00Z')],
			bookings: month,
			now
		});
		expect(older.reasons).toEqual(['Not inspected since it was fitted 33 days ago.']);
		// The later of the two kinds of check is the last one.
		const both = gloveWear({
			installedAt: at('2026-02-20T12:00:00Z'),
			inspections: [{ at: at('2026-03-22T12:00:00Z'), damaged: false, action: 'none' }],
			boxChecks: [at('2026-03-01T09:00:00Z')],
			bookings: month,
			now
		});
		expect(iso(both.lastCheckAt)).toBe('2026-03-22T12:00:00.000Z');
	});

	it('asks for replacement after damage, until a report says it was replaced', () => {
		const damaged = gloveWear({
			installedAt: at('2026-03-01T12:00:00Z'),
			inspections: [{ at: at('2026-03-24T09:00:00Z'), damaged: true, action: 'change_scheduled' }],
			bookings: [],
			now
		});
		expect(damaged).toMatchObject({
			damaged: true,
			flag: 'replace',
			reasons: ['Damage reported.']
		});
		const replaced = gloveWear({
			installedAt: at('2026-03-01T12:00:00Z'),
			inspections: [{ at: at('2026-03-24T09:00:00Z'), damaged: true, action: 'replaced' }],
			bookings: [],
			now
		});
		expect(replaced).toMatchObject({ damaged: false, flag: 'ok' });
	});

	it('asks for replacement at the age limit of gloves.ts (11 months of 30.44 days)', () => {
		// 11 × 30.44 = 334.84 days. 25 Apr 2025 → 25 Mar 2026 is 334 days; 24 Apr is 335.
		const recent = [{ at: at('2026-03-24T09:00:00Z'), damaged: false, action: 'none' }];
		const young = gloveWear({
			installedAt: at('2025-04-25T12:00:00Z'),
			inspections: recent,
			bookings: [],
			now
		});
		expect(young).toMatchObject({ ageDays: 334, flag: 'ok' });
		const old = gloveWear({
			installedAt: at('2025-04-24T12:00:00Z'),
			inspections: recent,
			bookings: [],
			now
		});
		expect(old).toMatchObject({ ageDays: 335, flag: 'replace' });
		expect(old.reasons).toEqual(['11 months or older; gloves are replaced about yearly.']);
	});
});
