import { describe, expect, it } from 'vitest';
import {
	NO_SHOW_GRACE_MIN,
	STATEMENT_CSV_HEADER,
	chargeOf,
	checkRate,
	hoursInMonth,
	lineCents,
	monthBounds,
	monthIsOver,
	noShowDue,
	parseMonth,
	roundCents,
	statement,
	statementCsv,
	statementFromSnapshot,
	type UsageBooking
} from './usage';

// The billing policy checked here (what is billed, windows, splitting, rounding) is common
// practice for shared instruments and a facility policy in spirit; there is no published
// source. The month's figures below are worked out by hand, not by the code under test.

const tz = 'Europe/Berlin';
const at = (iso: string) => new Date(iso);

/** Figures in units, as the hand-worked values below are written; the code keeps cents. */
function units<T extends { amountCents: number; rateCents?: number }>({
	amountCents,
	rateCents,
	...rest
}: T) {
	return {
		...rest,
		...(rateCents === undefined ? {} : { rate: rateCents / 100 }),
		amount: amountCents / 100
	};
}

function booking(overrides: Partial<UsageBooking> = {}): UsageBooking {
	return {
		id: 1,
		boxId: 1,
		boxName: 'Argon A',
		userName: 'Mira Okafor',
		startAt: at('2026-10-06T07:00:00Z'),
		endAt: at('2026-10-06T10:00:00Z'),
		status: 'confirmed',
		cancelCause: null,
		cancelledAt: null,
		checkInAt: null,
		checkOutAt: null,
		rateCents: 1250,
		cancelWindowHours: 24,
		...overrides
	};
}

describe('months in the facility zone', () => {
	it('parses YYYY-MM from 2000 to 2100 and nothing else', () => {
		expect(parseMonth('2026-10')).toBe('2026-10');
		expect(parseMonth('2000-01')).toBe('2000-01');
		expect(parseMonth('2100-12')).toBe('2100-12');
		for (const bad of [
			'1999-12',
			'2101-01',
			'2026-00',
			'2026-13',
			'2026-1',
			'26-10',
			'2026-10-01',
			'2026/10',
			' 2026-10',
			'2026-10 ',
			'2026-1a',
			'',
			'２０２６-10'
		])
			expect(parseMonth(bad), bad).toBeNull();
	});

	it('runs from local midnight on the 1st to local midnight on the next 1st', () => {
		// October 2026 in Berlin: 1 Oct 00:00 CEST (UTC+2) to 1 Nov 00:00 CET (UTC+1).
		expect(monthBounds('2026-10', tz)).toEqual({
			start: at('2026-09-30T22:00:00Z'),
			end: at('2026-10-31T23:00:00Z')
		});
		// December rolls over into January of the next year.
		expect(monthBounds('2026-12', tz)).toEqual({
			start: at('2026-11-30T23:00:00Z'),
			end: at('2026-12-31T23:00:00Z')
		});
		expect(monthBounds('2026-10', 'UTC').start).toEqual(at('2026-10-01T00:00:00Z'));
	});

	it('has 745 real hours in October 2026 and 743 in March 2026 (Berlin, DST changes)', () => {
		// By hand: 31 × 24 = 744, +1 for the night summer time ends (25 Oct 2026) and −1 for the
		// night it starts (29 Mar 2026).
		const oct = monthBounds('2026-10', tz);
		const mar = monthBounds('2026-03', tz);
		expect(hoursInMonth(oct.start, oct.end, oct)).toBe(745);
		expect(hoursInMonth(mar.start, mar.end, mar)).toBe(743);
		// A booking wider than the month bills only the month.
		expect(hoursInMonth(at('2026-09-01T00:00:00Z'), at('2026-12-01T00:00:00Z'), oct)).toBe(745);
	});

	it('refuses a malformed month or an unknown zone', () => {
		expect(() => monthBounds('2026-13', tz)).toThrow(/YYYY-MM/);
		expect(() => monthBounds('2026-10', 'Europe/Nowhere')).toThrow(/time zone/);
	});

	it('is over from local midnight on the next 1st, not before', () => {
		expect(monthIsOver('2026-10', tz, at('2026-10-31T22:59:59.999Z'))).toBe(false);
		expect(monthIsOver('2026-10', tz, at('2026-10-31T23:00:00Z'))).toBe(true);
		// 31 Oct 23:30 UTC is 1 Nov 00:30 CET: October is over in Berlin, not yet in UTC.
		expect(monthIsOver('2026-10', tz, at('2026-10-31T23:30:00Z'))).toBe(true);
		expect(monthIsOver('2026-10', 'UTC', at('2026-10-31T23:30:00Z'))).toBe(false);
		expect(monthIsOver('2026-10', tz, at('2026-10-15T12:00:00Z'))).toBe(false);
	});
});

describe('how a booking is charged (facility policy, common practice)', () => {
	it('bills a checked-in booking as booked, and one without a check-in too', () => {
		expect(
			chargeOf(booking({ status: 'completed', checkInAt: at('2026-10-06T07:05:00Z') }))
		).toMatchObject({ kind: 'used', billable: true });
		expect(chargeOf(booking({ status: 'confirmed' }))).toMatchObject({
			kind: 'booked_not_checked_in',
			billable: true
		});
		expect(chargeOf(booking({ status: 'completed' }))).toMatchObject({
			kind: 'booked_not_checked_in',
			billable: true
		});
	});

	it('bills a no-show in full and a pending booking not at all', () => {
		expect(chargeOf(booking({ status: 'no_show' }))).toMatchObject({
			kind: 'no_show',
			billable: true
		});
		expect(chargeOf(booking({ status: 'pending' }))).toMatchObject({
			kind: 'pending',
			billable: false
		});
	});

	const cancelled = (cancelledAt: string, cause: UsageBooking['cancelCause'] = 'user') =>
		chargeOf(booking({ status: 'cancelled', cancelCause: cause, cancelledAt: at(cancelledAt) }));

	it('bills a user cancellation inside the window and says why', () => {
		// Start 6 Oct 07:00Z; cancelled 04:00Z, 3 h before, inside the 24 h window.
		expect(cancelled('2026-10-06T04:00:00Z')).toEqual({
			kind: 'late_cancellation',
			billable: true,
			reason: 'Cancelled 3 h before the start, inside the 24 h window: billed as booked.'
		});
		// After the start it is late too.
		expect(cancelled('2026-10-06T07:30:00Z')).toEqual({
			kind: 'late_cancellation',
			billable: true,
			reason: 'Cancelled 30 min after the start: billed as booked.'
		});
	});

	it('does not bill a user cancellation at or before the window’s opening', () => {
		// Exactly 24 h before is not "later than start − 24 h".
		expect(cancelled('2026-10-05T07:00:00Z')).toEqual({
			kind: 'cancelled',
			billable: false,
			reason: 'Cancelled 24 h before the start, before the 24 h window: not billed.'
		});
		expect(cancelled('2026-10-05T07:00:01Z')).toMatchObject({
			kind: 'late_cancellation',
			billable: true
		});
		expect(cancelled('2026-10-03T16:00:00Z').reason).toBe(
			'Cancelled 2 d 15 h before the start, before the 24 h window: not billed.'
		);
	});

	it('never bills an outage cancellation and does not bill a manager’s', () => {
		expect(cancelled('2026-10-06T06:30:00Z', 'outage')).toMatchObject({
			kind: 'outage_cancelled',
			billable: false
		});
		expect(cancelled('2026-10-06T08:00:00Z', 'outage').billable).toBe(false);
		expect(cancelled('2026-10-06T06:30:00Z', 'manager')).toMatchObject({
			kind: 'manager_cancelled',
			billable: false
		});
	});

	it('does not bill a cancellation with no recorded cause or time', () => {
		expect(cancelled('2026-10-06T06:30:00Z', null)).toMatchObject({
			kind: 'cancelled',
			billable: false
		});
		expect(
			chargeOf(booking({ status: 'cancelled', cancelCause: 'user', cancelledAt: null }))
		).toMatchObject({ kind: 'cancelled', billable: false });
	});

	it('has no window on a box whose window is 0 h: only cancelling after the start bills', () => {
		const noWindow = (iso: string) =>
			chargeOf(
				booking({
					status: 'cancelled',
					cancelCause: 'user',
					cancelledAt: at(iso),
					cancelWindowHours: 0
				})
			);
		expect(noWindow('2026-10-06T06:59:00Z')).toEqual({
			kind: 'cancelled',
			billable: false,
			reason: 'Cancelled 1 min before the start: not billed.'
		});
		expect(noWindow('2026-10-06T07:00:00Z')).toMatchObject({
			kind: 'late_cancellation',
			reason: 'Cancelled at the start: billed as booked.'
		});
	});
});

describe('October 2026 for an invented group, worked by hand (Berlin; summer time ends 25 Oct)', () => {
	// Boxes and rates: Argon A 12.50/h (24 h window), Nitrogen B 8.40/h (48 h window),
	// Argon C 7.35/h (24 h window). October runs 30 Sep 22:00Z – 31 Oct 23:00Z.
	const argonA = { boxId: 1, boxName: 'Argon A', rateCents: 1250, cancelWindowHours: 24 };
	const nitrogenB = { boxId: 2, boxName: 'Nitrogen B', rateCents: 840, cancelWindowHours: 48 };
	const argonC = { boxId: 3, boxName: 'Argon C', rateCents: 735, cancelWindowHours: 24 };
	const mira = { userName: 'Mira Okafor' };
	const jonas = { userName: 'Jonas Weber' };

	const bookings: UsageBooking[] = [
		// 108: 31 Oct 22:00 CET – 1 Nov 02:00 CET (21:00Z–01:00Z), checked in 22:30 CET, out
		// 01:30 CET. October: 22:00–24:00 = 2 h booked, 22:30–24:00 = 1.5 h used; 2 × 8.40 = 16.80.
		// November: 00:00–02:00 = 2 h booked, 00:00–01:30 = 1.5 h used; 16.80.
		booking({
			id: 108,
			...nitrogenB,
			...jonas,
			startAt: at('2026-10-31T21:00:00Z'),
			endAt: at('2026-11-01T01:00:00Z'),
			status: 'completed',
			checkInAt: at('2026-10-31T21:30:00Z'),
			checkOutAt: at('2026-11-01T00:30:00Z')
		}),
		// 101: 6 Oct 09:00–12:00 CEST (07:00Z–10:00Z), in 09:10, out 11:20: used 2 h 10 min =
		// 2.1667 h (2.17), booked and billed 3 h; 3 × 12.50 = 37.50.
		booking({
			id: 101,
			...argonA,
			...mira,
			startAt: at('2026-10-06T07:00:00Z'),
			endAt: at('2026-10-06T10:00:00Z'),
			status: 'completed',
			checkInAt: at('2026-10-06T07:10:00Z'),
			checkOutAt: at('2026-10-06T09:20:00Z')
		}),
		// 102: no-show, 8 Oct 14:00–16:00 CEST: 2 h × 8.40 = 16.80.
		booking({
			id: 102,
			...nitrogenB,
			...jonas,
			startAt: at('2026-10-08T12:00:00Z'),
			endAt: at('2026-10-08T14:00:00Z'),
			status: 'no_show'
		}),
		// 103: late cancellation, 13 Oct 10:00–11:30 CEST, cancelled 07:00 CEST (3 h before,
		// inside 24 h): 1.5 h × 7.35 = 11.025 → 11.03 (half up).
		booking({
			id: 103,
			...argonC,
			...mira,
			startAt: at('2026-10-13T08:00:00Z'),
			endAt: at('2026-10-13T09:30:00Z'),
			status: 'cancelled',
			cancelCause: 'user',
			cancelledAt: at('2026-10-13T05:00:00Z')
		}),
		// 104: early cancellation, 15 Oct 09:00–11:00 CEST, cancelled 12 Oct 18:00 CEST
		// (2 d 15 h before): 2 h booked, 0 billed.
		booking({
			id: 104,
			...argonA,
			...mira,
			startAt: at('2026-10-15T07:00:00Z'),
			endAt: at('2026-10-15T09:00:00Z'),
			status: 'cancelled',
			cancelCause: 'user',
			cancelledAt: at('2026-10-12T16:00:00Z')
		}),
		// 105: outage cancellation 30 min before, 20 Oct 13:00–15:00 CEST: 2 h booked, 0 billed.
		booking({
			id: 105,
			...nitrogenB,
			...jonas,
			startAt: at('2026-10-20T11:00:00Z'),
			endAt: at('2026-10-20T13:00:00Z'),
			status: 'cancelled',
			cancelCause: 'outage',
			cancelledAt: at('2026-10-20T10:30:00Z')
		}),
		// 106: manager cancellation 1 h before, 22 Oct 09:00–10:30 CEST: 1.5 h booked, 0 billed.
		booking({
			id: 106,
			...nitrogenB,
			...mira,
			startAt: at('2026-10-22T07:00:00Z'),
			endAt: at('2026-10-22T08:30:00Z'),
			status: 'cancelled',
			cancelCause: 'manager',
			cancelledAt: at('2026-10-22T06:00:00Z')
		}),
		// 107: the night summer time ends, 25 Oct 01:00 CEST – 04:00 CET (24 Oct 23:00Z –
		// 25 Oct 03:00Z): 3 h on the wall clock, 4 real hours; 4 × 12.50 = 50.00. Checked in
		// 01:05 CEST, never checked out: used to the end, 3 h 55 min = 3.9167 h (3.92).
		booking({
			id: 107,
			...argonA,
			...jonas,
			startAt: at('2026-10-24T23:00:00Z'),
			endAt: at('2026-10-25T03:00:00Z'),
			status: 'completed',
			checkInAt: at('2026-10-24T23:05:00Z')
		}),
		// 109: confirmed, never checked in, 27 Oct 08:00–09:30 CET: 1.5 h × 7.35 = 11.03.
		booking({
			id: 109,
			...argonC,
			...jonas,
			startAt: at('2026-10-27T07:00:00Z'),
			endAt: at('2026-10-27T08:30:00Z'),
			status: 'confirmed'
		}),
		// 110: waiting for approval, 29 Oct 14:00–15:00 CET: 1 h booked, 0 billed.
		booking({
			id: 110,
			...argonA,
			...mira,
			startAt: at('2026-10-29T13:00:00Z'),
			endAt: at('2026-10-29T14:00:00Z'),
			status: 'pending'
		}),
		// 99 and 100 are September's: 30 Sep 20:00–22:00 and 22:00–24:00 CEST; 100 ends exactly
		// where October starts, so neither has a line.
		booking({
			id: 99,
			...argonA,
			startAt: at('2026-09-30T18:00:00Z'),
			endAt: at('2026-09-30T20:00:00Z')
		}),
		booking({
			id: 100,
			...argonA,
			startAt: at('2026-09-30T20:00:00Z'),
			endAt: at('2026-09-30T22:00:00Z')
		})
	];

	const october = statement(bookings, '2026-10', tz);
	const pick = (id: number) => {
		const l = october.lines.find((x) => x.bookingId === id)!;
		return [
			l.kind,
			l.bookedHours,
			l.usedHours,
			l.billedHours,
			l.rateCents / 100,
			l.amountCents / 100
		];
	};

	it('has one line per October booking, by start', () => {
		expect(october.lines.map((l) => l.bookingId)).toEqual([
			101, 102, 103, 104, 105, 106, 107, 109, 110, 108
		]);
		expect(october.start).toEqual(at('2026-09-30T22:00:00Z'));
		expect(october.end).toEqual(at('2026-10-31T23:00:00Z'));
	});

	it('charges each line as worked out by hand', () => {
		// kind, booked h, used h, billed h, rate, amount
		expect(pick(101)).toEqual(['used', 3, 2.17, 3, 12.5, 37.5]);
		expect(pick(102)).toEqual(['no_show', 2, 0, 2, 8.4, 16.8]);
		expect(pick(103)).toEqual(['late_cancellation', 1.5, 0, 1.5, 7.35, 11.03]);
		expect(pick(104)).toEqual(['cancelled', 2, 0, 0, 12.5, 0]);
		expect(pick(105)).toEqual(['outage_cancelled', 2, 0, 0, 8.4, 0]);
		expect(pick(106)).toEqual(['manager_cancelled', 1.5, 0, 0, 8.4, 0]);
		expect(pick(107)).toEqual(['used', 4, 3.92, 4, 12.5, 50]);
		expect(pick(109)).toEqual(['booked_not_checked_in', 1.5, 0, 1.5, 7.35, 11.03]);
		expect(pick(110)).toEqual(['pending', 1, 0, 0, 12.5, 0]);
		expect(pick(108)).toEqual(['used', 2, 1.5, 2, 8.4, 16.8]);
		expect(october.lines.find((l) => l.bookingId === 103)!.reason).toBe(
			'Cancelled 3 h before the start, inside the 24 h window: billed as booked.'
		);
	});

	it('totals the month to the cent', () => {
		// Booked: 3 + 2 + 1.5 + 2 + 2 + 1.5 + 4 + 1.5 + 1 + 2 = 20.5 h.
		// Used, exact: 2 h 10 + 3 h 55 + 1 h 30 = 7 h 35 min = 7.5833 → 7.58 (the rounded lines
		// would add up to 2.17 + 3.92 + 1.50 = 7.59).
		// Billed: 3 + 2 + 1.5 + 4 + 1.5 + 2 = 14 h.
		// Amount, from the rounded lines: 37.50 + 16.80 + 11.03 + 50.00 + 11.03 + 16.80 = 143.16
		// (the exact products would give 143.15; the statement adds up as printed instead).
		expect(units(october.totals)).toEqual({
			bookedHours: 20.5,
			usedHours: 7.58,
			billedHours: 14,
			amount: 143.16
		});
	});

	it('totals each box', () => {
		// Argon A: 101, 104, 107, 110 → booked 3 + 2 + 4 + 1 = 10, used 6 h 05 min = 6.08,
		// billed 7, 37.50 + 50.00 = 87.50. Argon C: 103, 109 → 3, 0, 3, 22.06.
		// Nitrogen B: 102, 105, 106, 108 → 7.5, 1.5, 4, 33.60.
		expect(october.byBox.map(units)).toEqual([
			{
				boxId: 1,
				boxName: 'Argon A',
				bookedHours: 10,
				usedHours: 6.08,
				billedHours: 7,
				amount: 87.5
			},
			{ boxId: 3, boxName: 'Argon C', bookedHours: 3, usedHours: 0, billedHours: 3, amount: 22.06 },
			{
				boxId: 2,
				boxName: 'Nitrogen B',
				bookedHours: 7.5,
				usedHours: 1.5,
				billedHours: 4,
				amount: 33.6
			}
		]);
	});

	it('bills November its own part of the booking across midnight', () => {
		const november = statement(bookings, '2026-11', tz);
		expect(
			november.lines.map((l) => [l.bookingId, l.bookedHours, l.usedHours, l.amountCents / 100])
		).toEqual([[108, 2, 1.5, 16.8]]);
		expect(units(november.totals)).toEqual({
			bookedHours: 2,
			usedHours: 1.5,
			billedHours: 2,
			amount: 16.8
		});
	});

	it('writes the month as CSV that adds up', () => {
		const csv = statementCsv(october, 'Keller group');
		const rows = csv.split('\r\n');
		expect(rows[0]).toBe(STATEMENT_CSV_HEADER);
		expect(rows).toHaveLength(1 + 10 + 1 + 1); // header, lines, total, empty after the last CRLF
		expect(rows[12]).toBe('');
		// Times with the offset in force at each end: CEST before the change, CET after.
		expect(rows[7]).toBe(
			'107,Argon A,Jonas Weber,2026-10-25T01:00:00+02:00,2026-10-25T04:00:00+01:00,used,' +
				'"Checked in: the booked time is billed, not the time used.",4.00,3.92,4.00,12.50,50.00'
		);
		expect(rows[3]).toBe(
			'103,Argon C,Mira Okafor,2026-10-13T10:00:00+02:00,2026-10-13T11:30:00+02:00,' +
				'late_cancellation,"Cancelled 3 h before the start, inside the 24 h window: billed as booked.",' +
				'1.50,0.00,1.50,7.35,11.03'
		);
		expect(rows[10]).toMatch(
			/^108,Nitrogen B,Jonas Weber,2026-10-31T22:00:00\+01:00,2026-11-01T02:00:00\+01:00,used,.*,2\.00,1\.50,2\.00,8\.40,16\.80$/
		);
		expect(rows[11]).toBe('total,,,,,,Keller group 2026-10,20.50,7.58,14.00,,143.16');
		// The amount column (last field) of the lines adds up to the total, in cents.
		const cents = rows.slice(1, 11).map((r) => Math.round(Number(r.split(',').at(-1)) * 100));
		expect(cents.reduce((a, b) => a + b, 0)).toBe(14316);
		// A statement stored as JSON (a closed month's snapshot) writes the same CSV.
		expect(statementCsv(JSON.parse(JSON.stringify(october)), 'Keller group')).toBe(csv);
	});
});

describe('statement edge cases', () => {
	it('gives an empty month a header and a total of zeros', () => {
		const empty = statement([], '2026-02', tz);
		expect(empty.lines).toEqual([]);
		expect(units(empty.totals)).toEqual({
			bookedHours: 0,
			usedHours: 0,
			billedHours: 0,
			amount: 0
		});
		expect(statementCsv(empty, 'Keller group')).toBe(
			`${STATEMENT_CSV_HEADER}\r\ntotal,,,,,,Keller group 2026-02,0.00,0.00,0.00,,0.00\r\n`
		);
	});

	it('sorts lines that start together by id', () => {
		const s = statement(
			[booking({ id: 7 }), booking({ id: 3 }), booking({ id: 5, boxId: 2 })],
			'2026-10',
			tz
		);
		expect(s.lines.map((l) => l.bookingId)).toEqual([3, 5, 7]);
	});

	it('clips used time to the booked slot: an early check-in and a late check-out', () => {
		// Slot 07:00Z–10:00Z; in 06:50Z (check-in opens 15 min before), out 10:40Z: 3 h used.
		const s = statement(
			[
				booking({
					status: 'completed',
					checkInAt: at('2026-10-06T06:50:00Z'),
					checkOutAt: at('2026-10-06T10:40:00Z')
				})
			],
			'2026-10',
			tz
		);
		expect(s.lines[0].usedHours).toBe(3);
	});

	it('rounds amounts half up to the cent despite binary floating point', () => {
		// 1.5 h × 7.35 = 11.025, which floating point computes as 11.02499…; by hand it is 11.03.
		const s = statement(
			[booking({ rateCents: 735, endAt: at('2026-10-06T08:30:00Z') })],
			'2026-10',
			tz
		);
		expect(s.lines[0].amountCents / 100).toBe(11.03);
		expect(roundCents(1.005)).toBe(1.01);
		expect(roundCents(2.675)).toBe(2.68);
		expect(roundCents(0.004)).toBe(0);
	});

	it('quotes commas, quotes and newlines (RFC 4180) and defuses formulas', () => {
		const s = statement(
			[
				booking({
					boxName: 'Argon C, "dry" bench',
					userName: 'Line one\nline two'
				}),
				booking({ id: 2, userName: '=HYPERLINK("http://example.invalid")' })
			],
			'2026-10',
			tz
		);
		const csv = statementCsv(s, 'Keller, Ruiz & "Co"');
		expect(csv).toContain(',"Argon C, ""dry"" bench","Line one\nline two",');
		expect(csv).toContain(`,"'=HYPERLINK(""http://example.invalid"")",`);
		expect(csv).toContain('\r\ntotal,,,,,,"Keller, Ruiz & ""Co"" 2026-10",');
	});
});

describe('no-show due (facility policy, common practice)', () => {
	// Slot 6 Oct 07:00Z–10:00Z, 15 min grace.
	const b = booking();
	const due = (iso: string, over: Partial<UsageBooking> = {}) =>
		noShowDue({ ...b, ...over }, NO_SHOW_GRACE_MIN, at(iso));

	it('waits 15 minutes after the start by default', () => {
		expect(NO_SHOW_GRACE_MIN).toBe(15);
		expect(due('2026-10-06T07:14:59Z')).toBe(false);
		expect(due('2026-10-06T07:15:00Z')).toBe(true);
		expect(due('2026-10-06T09:59:59Z')).toBe(true);
		expect(due('2026-10-06T10:00:00Z')).toBe(false); // ended: nothing left to free
	});

	it('only for a confirmed booking without a check-in', () => {
		expect(due('2026-10-06T07:30:00Z', { checkInAt: at('2026-10-06T07:20:00Z') })).toBe(false);
		for (const status of ['pending', 'cancelled', 'completed', 'no_show'] as const)
			expect(due('2026-10-06T07:30:00Z', { status }), status).toBe(false);
	});

	it('takes another grace', () => {
		expect(noShowDue(b, 0, at('2026-10-06T07:00:00Z'))).toBe(true);
		expect(noShowDue(b, 30, at('2026-10-06T07:29:00Z'))).toBe(false);
	});
});

describe('rates', () => {
	it('accepts 0 to 100 000 an hour', () => {
		for (const ok of [0, 0.01, 12.5, 100_000]) expect(checkRate(ok), String(ok)).toBeNull();
	});

	it('refuses negative, non-finite and absurd rates', () => {
		expect(checkRate(-0.01)).toMatch(/negative/);
		expect(checkRate(Number.NaN)).toMatch(/number/);
		expect(checkRate(Number.POSITIVE_INFINITY)).toMatch(/number/);
		expect(checkRate(100_000.01)).toMatch(/100,000/);
	});
});

describe('no-shows freed early and bookings never approved (facility policy)', () => {
	it('bills a no-show up to when its slot was freed, not to its end', () => {
		// 09:00–12:00 CEST, freed at 09:15: 0.25 h × 12.50 = 3.125 → 3.13.
		const s = statement(
			[booking({ status: 'no_show', heldUntil: at('2026-10-06T07:15:00Z') })],
			'2026-10',
			tz
		);
		expect(units(s.lines[0])).toMatchObject({ bookedHours: 3, billedHours: 0.25, amount: 3.13 });
		expect(s.lines[0].reason).toMatch(/until the rest of the slot was freed/);
	});
	it('does not bill a late withdrawal of a booking that was never approved', () => {
		const withdrawn = booking({
			status: 'cancelled',
			cancelCause: 'user',
			cancelledAt: at('2026-10-06T06:00:00Z'),
			confirmedAt: null
		});
		expect(chargeOf(withdrawn)).toMatchObject({ kind: 'cancelled', billable: false });
		expect(chargeOf({ ...withdrawn, confirmedAt: at('2026-10-01T00:00:00Z') })).toMatchObject({
			kind: 'late_cancellation',
			billable: true
		});
	});
});

describe('money in integer cents, rounded once per line (the rule in usage.ts)', () => {
	const HOUR = 3_600_000;

	it('rounds a line half up from the exact product of time and rate', () => {
		// Worked by hand: 1.5 h × 7.35 = 11.025 → 11.03; 0.25 h × 12.50 = 3.125 → 3.13;
		// 0.5 h × 2.01 = 1.005 → 1.01; 0.75 h × 1.70 = 1.275 → 1.28; 18 min × 3.35 = 1.005 → 1.01.
		// Binary floating point holds each product just under its half cent, so
		// Math.round(hours × rate × 100) would give 11.02, 1.00, 1.27 and 1.00.
		expect(lineCents(1.5 * HOUR, 735)).toBe(1103);
		expect(lineCents(0.25 * HOUR, 1250)).toBe(313);
		expect(lineCents(0.5 * HOUR, 201)).toBe(101);
		expect(lineCents(0.75 * HOUR, 170)).toBe(128);
		expect(lineCents(18 * 60_000, 335)).toBe(101);
		expect(Math.round(0.5 * 2.01 * 100)).toBe(100); // the drift the integers avoid
	});

	it('goes up from exactly half a cent and down from just under it', () => {
		// 1 s at 18.00/h = 1800 / 3600 = 0.5 cent → 1; 1 s at 17.99/h = 0.4997 cent → 0.
		expect(lineCents(1000, 1800)).toBe(1);
		expect(lineCents(1000, 1799)).toBe(0);
		// 10 s at 18.00/h = 5 cents exactly; nothing billed costs nothing.
		expect(lineCents(10_000, 1800)).toBe(5);
		expect(lineCents(0, 1800)).toBe(0);
		expect(lineCents(HOUR, 0)).toBe(0);
	});

	it('stays exact where the product passes 2^53: all of October 2026 at 99,999.99 an hour', () => {
		// 745 h (the month summer time ends) × 9,999,999 cents = 7,449,999,255 cents.
		const ms = 745 * HOUR;
		expect(ms * 9_999_999).toBeGreaterThan(Number.MAX_SAFE_INTEGER);
		expect(lineCents(ms, 9_999_999)).toBe(7_449_999_255);
		const oct = monthBounds('2026-10', tz);
		const s = statement(
			[booking({ startAt: oct.start, endAt: oct.end, rateCents: 9_999_999 })],
			'2026-10',
			tz
		);
		expect(s.totals.amountCents).toBe(7_449_999_255);
		expect(statementCsv(s, 'G').split('\r\n')[1].split(',').slice(-2)).toEqual([
			'99999.99',
			'74499992.55'
		]);
	});

	it('refuses a time or a rate that is not a whole, non-negative number', () => {
		expect(() => lineCents(1.5, 100)).toThrow(/time/);
		expect(() => lineCents(-1, 100)).toThrow(/time/);
		expect(() => lineCents(HOUR, 12.5)).toThrow(/rate/);
		expect(() => lineCents(HOUR, -1)).toThrow(/rate/);
	});

	it('rounds hours half up from whole milliseconds', () => {
		// 1 h 0 min 18 s = 1.005 h → 1.01 (3618000 / 3600000 in floating point is 1.00499…).
		const s = statement([booking({ endAt: at('2026-10-06T08:00:18Z') })], '2026-10', tz);
		expect(s.lines[0].bookedHours).toBe(1.01);
		expect(s.lines[0].billedHours).toBe(1.01);
		// The amount is the exact time's: 1.005 h × 12.50 = 12.5625 → 12.56.
		expect(s.lines[0].amountCents).toBe(1256);
	});

	it('adds a month of lines in cents, where adding units in floating point drifts', () => {
		// 31 daily bookings of 1 h at 7.35: 31 × 7.35 = 227.85. Added up as numbers in units
		// the sum comes out 227.84999999999988.
		const days = Array.from({ length: 31 }, (_, i) =>
			booking({
				id: i + 1,
				rateCents: 735,
				startAt: at(`2026-10-${String(i + 1).padStart(2, '0')}T08:00:00Z`),
				endAt: at(`2026-10-${String(i + 1).padStart(2, '0')}T09:00:00Z`)
			})
		);
		expect(days.reduce((sum) => sum + 7.35, 0)).not.toBe(227.85);
		const s = statement(days, '2026-10', tz);
		expect(s.lines.every((l) => l.amountCents === 735)).toBe(true);
		expect(s.totals).toEqual({
			bookedHours: 31,
			usedHours: 0,
			billedHours: 31,
			amountCents: 22_785
		});
		expect(statementCsv(s, 'G').split('\r\n').at(-2)).toBe(
			'total,,,,,,G 2026-10,31.00,0.00,31.00,,227.85'
		);
		// Ten 6-minute bookings at 1.00/h: ten lines of 0.10 make 1.00 (0.1 added ten times
		// in floating point is 0.9999999999999999).
		const tenths = Array.from({ length: 10 }, (_, i) =>
			booking({
				id: i + 1,
				rateCents: 100,
				startAt: at(`2026-10-06T0${i}:00:00Z`),
				endAt: at(`2026-10-06T0${i}:06:00Z`)
			})
		);
		expect(statement(tenths, '2026-10', tz).totals.amountCents).toBe(100);
	});

	it('keeps the October 2025 example of the integration test at 84.38', () => {
		// At 12.50/h (Berlin): 3 h used = 37.50; a no-show freed after 15 min, 0.25 h = 3.125
		// → 3.13; a late cancellation of 1.5 h = 18.75; 2 h of a booking across the month's end
		// = 25.00; a withdrawal never approved, an outage and an early cancellation = 0.
		// 37.50 + 3.13 + 18.75 + 25.00 = 84.38 (the exact products would add to 84.375).
		const s = statement(
			[
				booking({
					id: 1,
					startAt: at('2025-10-07T07:00:00Z'),
					endAt: at('2025-10-07T10:00:00Z'),
					status: 'completed',
					checkInAt: at('2025-10-07T07:05:00Z'),
					checkOutAt: at('2025-10-07T09:35:00Z')
				}),
				booking({
					id: 2,
					startAt: at('2025-10-14T12:00:00Z'),
					endAt: at('2025-10-14T14:00:00Z'),
					heldUntil: at('2025-10-14T12:15:00Z'),
					status: 'no_show'
				}),
				booking({
					id: 3,
					startAt: at('2025-10-21T08:00:00Z'),
					endAt: at('2025-10-21T09:30:00Z'),
					status: 'cancelled',
					cancelCause: 'user',
					cancelledAt: at('2025-10-21T06:00:00Z'),
					confirmedAt: at('2025-10-01T08:00:00Z')
				}),
				booking({
					id: 4,
					startAt: at('2025-10-21T12:00:00Z'),
					endAt: at('2025-10-21T13:00:00Z'),
					status: 'cancelled',
					cancelCause: 'user',
					cancelledAt: at('2025-10-21T11:00:00Z'),
					confirmedAt: null
				}),
				booking({
					id: 5,
					startAt: at('2025-10-22T08:00:00Z'),
					endAt: at('2025-10-22T10:00:00Z'),
					status: 'cancelled',
					cancelCause: 'outage',
					cancelledAt: at('2025-10-22T07:30:00Z')
				}),
				booking({
					id: 6,
					startAt: at('2025-10-28T08:00:00Z'),
					endAt: at('2025-10-28T09:00:00Z'),
					status: 'cancelled',
					cancelCause: 'user',
					cancelledAt: at('2025-10-20T08:00:00Z')
				}),
				booking({
					id: 7,
					startAt: at('2025-10-31T21:00:00Z'),
					endAt: at('2025-11-01T01:00:00Z'),
					status: 'completed'
				})
			],
			'2025-10',
			tz
		);
		expect(s.lines.map((l) => l.amountCents)).toEqual([3750, 313, 1875, 0, 0, 0, 2500]);
		expect(s.totals).toEqual({
			bookedHours: 12.5,
			usedHours: 2.5,
			billedHours: 6.75,
			amountCents: 8438
		});
		expect(statementCsv(s, 'G').split('\r\n').at(-2)!.split(',').slice(-5)).toEqual([
			'12.50',
			'2.50',
			'6.75',
			'',
			'84.38'
		]);
	});
});

describe('the currency and closed months’ snapshots', () => {
	const oneLine = () =>
		statement(
			[booking({ rateCents: 735, endAt: at('2026-10-06T08:30:00Z') })],
			'2026-10',
			tz,
			'CHF'
		);

	it('carries the currency it was drawn up in, EUR unless told', () => {
		expect(statement([], '2026-10', tz).currency).toBe('EUR');
		expect(oneLine().currency).toBe('CHF');
	});

	it('reads a snapshot back as it was taken, currency included', () => {
		const s = oneLine();
		const stored = JSON.parse(JSON.stringify(s));
		expect(statementFromSnapshot(stored, 'EUR')).toEqual(s);
	});

	it('reads a snapshot from before amounts were kept in cents into cents, exactly', () => {
		// The shape closed months were stored in: rate and amount in units, no currency.
		const legacy = {
			month: '2026-10',
			tz,
			start: '2026-09-30T22:00:00.000Z',
			end: '2026-10-31T23:00:00.000Z',
			lines: [
				{
					bookingId: 1,
					boxId: 3,
					boxName: 'Argon C',
					userName: 'Mira Okafor',
					startAt: '2026-10-06T07:00:00.000Z',
					endAt: '2026-10-06T08:30:00.000Z',
					kind: 'booked_not_checked_in',
					reason: 'Not checked in: billed as booked.',
					bookedHours: 1.5,
					usedHours: 0,
					billedHours: 1.5,
					rate: 7.35,
					amount: 11.03
				}
			],
			totals: { bookedHours: 1.5, usedHours: 0, billedHours: 1.5, amount: 11.03 },
			byBox: [
				{
					boxId: 3,
					boxName: 'Argon C',
					bookedHours: 1.5,
					usedHours: 0,
					billedHours: 1.5,
					amount: 11.03
				}
			]
		};
		const s = statementFromSnapshot(legacy, 'EUR');
		expect(s.currency).toBe('EUR');
		expect(s.start).toEqual(at('2026-09-30T22:00:00Z'));
		expect(s.lines[0]).toMatchObject({ rateCents: 735, amountCents: 1103 });
		expect(s.lines[0]).not.toHaveProperty('amount');
		expect(s.lines[0].startAt).toEqual(at('2026-10-06T07:00:00Z'));
		expect(s.totals).toEqual({
			bookedHours: 1.5,
			usedHours: 0,
			billedHours: 1.5,
			amountCents: 1103
		});
		expect(s.byBox[0].amountCents).toBe(1103);
		// The CSV is the one the month was closed with.
		expect(statementCsv(s, 'G').split('\r\n')[1].split(',').slice(-2)).toEqual(['7.35', '11.03']);
	});
});
