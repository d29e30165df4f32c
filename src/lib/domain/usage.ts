// Usage and recharge: what a research group is billed for a month of box time. Pure: no I/O,
// no clock of its own; the caller loads the group's bookings and picks each one's rate.
//
// Billing policy (common practice for shared instruments, a facility setting in spirit):
// - A month is YYYY-MM in the facility's zone, from local midnight on the 1st to local
//   midnight on the next 1st. Hours are real elapsed hours, so the night summer time ends
//   bills one hour more than the wall clock shows, and the night it starts one hour less.
// - Booked time is billed, not used time: a box held for a slot is unavailable to everyone
//   else for it, whether or not the holder works the whole slot.
// - Billed in full: confirmed or completed bookings (checked in or not; bookings from before
//   check-in existed have none), and cancellations by the user of a confirmed booking made
//   inside the box's late-cancellation window (later than start − window) or after the start.
// - No-shows: billed from the start until the slot was freed (the grace time), since the rest
//   of it went back to others; without that moment recorded, in full.
// - Not billed: cancellations by the user before the window or of a booking never approved,
//   cancellations by a manager,
//   cancellations for an outage (never), and bookings still waiting for approval. A
//   cancellation whose cause or time was not recorded is not billed either: nothing shows
//   it was late.
// - A booking that spans a month boundary is split: each month bills the hours inside it.
// - Hours used run from check-in to check-out (or to the booked end if nobody checked out),
//   clipped to the booked slot; they are reported beside the billed hours, not billed.
//
// Money (see money.ts) is integer cents from the rate to the total, rounded once:
// - A line's amount is its billed time × its hourly rate, worked out exactly (whole
//   milliseconds × whole cents, in integers) and rounded to the cent half up: a half cent
//   or more goes up. 1.5 h at 7.35 is 11.025, billed 11.03. Half up, not half to even,
//   because each line is a charge someone checks by hand with a calculator, which rounds
//   half up; a tie needs the product to land exactly on half a cent, so the bias is rare and
//   at most half a cent a line.
// - A box's and the month's amount is the sum of its lines' rounded amounts, in cents, so a
//   statement adds up as printed; rounding the exact sum once could differ by up to half a
//   cent a line (the October 2025 example bills 84.38 where the exact products make 84.375).
// - Hours are shown to 2 decimals, rounded half up the same way from whole milliseconds;
//   totals of hours are summed from the exact times, then rounded.
import { DateTime } from 'luxon';
import type { BookingStatus, CancelCause } from './bookings';
import { DEFAULT_CURRENCY, plainAmount, toCents } from './money';
import { clip, formatDuration, local, msWithin } from './time';

/** Minutes after the start with no check-in before a confirmed booking counts as a no-show. */
export const NO_SHOW_GRACE_MIN = 15;

/** The highest hourly rate a box may carry: a guard against typos, not a business rule. */
export const MAX_RATE = 100_000;

export type UsageBooking = {
	id: number;
	boxId: number;
	boxName: string;
	userName: string;
	startAt: Date;
	endAt: Date;
	status: BookingStatus;
	cancelCause: CancelCause | null;
	cancelledAt: Date | null;
	checkInAt: Date | null;
	checkOutAt: Date | null;
	/** The hourly rate that applies, in cents: the box's internal or external rate, chosen by the caller. */
	rateCents: number;
	/** The box's late-cancellation window, in hours. */
	cancelWindowHours: number;
	/** When it was confirmed; null if it never was (withdrawn while waiting for approval). */
	confirmedAt?: Date | null;
	/** For a no-show: when its slot was freed. It is billed up to then, not to its end. */
	heldUntil?: Date | null;
};

/** What deciding a booking's charge needs: statements and reports both bill through it. */
export type Billable = Pick<
	UsageBooking,
	| 'status'
	| 'startAt'
	| 'endAt'
	| 'cancelCause'
	| 'cancelledAt'
	| 'checkInAt'
	| 'cancelWindowHours'
	| 'confirmedAt'
	| 'heldUntil'
>;

export type ChargeKind =
	| 'used'
	| 'booked_not_checked_in'
	| 'no_show'
	| 'late_cancellation'
	| 'cancelled'
	| 'outage_cancelled'
	| 'manager_cancelled'
	| 'pending';

export const chargeLabel: Record<ChargeKind, string> = {
	used: 'Used',
	booked_not_checked_in: 'Booked, not checked in',
	no_show: 'No-show',
	late_cancellation: 'Late cancellation',
	cancelled: 'Cancelled in time',
	outage_cancelled: 'Cancelled for an outage',
	manager_cancelled: 'Cancelled by a manager',
	pending: 'Waiting for approval'
};

export type Charge = { kind: ChargeKind; billable: boolean; reason: string };

export type MonthBounds = { start: Date; end: Date };

export type Line = {
	bookingId: number;
	boxId: number;
	boxName: string;
	userName: string;
	startAt: Date;
	endAt: Date;
	kind: ChargeKind;
	reason: string;
	/** Hours of the booking inside this month, to 2 decimals. */
	bookedHours: number;
	usedHours: number;
	/** bookedHours when the booking is billable (a no-show's only until it was freed), else 0. */
	billedHours: number;
	/** The hourly rate, in cents. */
	rateCents: number;
	/** Exact billed time × rate, rounded half up to the cent (once, here). */
	amountCents: number;
};

export type Totals = {
	bookedHours: number;
	usedHours: number;
	billedHours: number;
	/** The sum of the lines' amountCents. */
	amountCents: number;
};

export type BoxTotals = Totals & { boxId: number; boxName: string };

export type Statement = {
	month: string;
	/** The facility zone the month and the CSV's times are in. */
	tz: string;
	/** ISO 4217 code the amounts are in, kept with a closed month's snapshot. */
	currency: string;
	start: Date;
	end: Date;
	lines: Line[];
	totals: Totals;
	/** The same totals per box, by box name. */
	byBox: BoxTotals[];
};

const HOUR_MS = 3_600_000;
const HUNDREDTH_HOUR_MS = 36_000;

/** Whole milliseconds as hours to 2 decimals, half up, in integers: 18 s is 0.005 h → 0.01. */
function hoursOf(ms: number): number {
	const hundredths = Math.floor(ms / HUNDREDTH_HOUR_MS);
	return (hundredths + (2 * (ms % HUNDREDTH_HOUR_MS) >= HUNDREDTH_HOUR_MS ? 1 : 0)) / 100;
}

/**
 * What `ms` of box time costs at `rateCents` an hour, in cents, rounded half up: the one
 * rounding of a line. Exact: the product of a month of milliseconds and a rate near
 * MAX_RATE passes 2^53, so it is taken in BigInt.
 */
export function lineCents(ms: number, rateCents: number): number {
	if (!Number.isSafeInteger(ms) || ms < 0) throw new Error(`Not a length of time: ${ms} ms.`);
	if (!Number.isSafeInteger(rateCents) || rateCents < 0)
		throw new Error(`Not a rate in cents: ${rateCents}.`);
	const product = BigInt(ms) * BigInt(rateCents);
	const hour = BigInt(HOUR_MS);
	const cents = product / hour;
	return Number(2n * (product % hour) >= hour ? cents + 1n : cents);
}

/**
 * A decimal amount in units rounded half up to the cent, as written: 1.005 → 1.01 although
 * binary floating point holds 1.00499…. toCents gives the same in cents, which is what
 * money is kept in; this is for a figure that stays in units.
 */
export const roundCents = (x: number) => toCents(x) / 100;

/** "YYYY-MM" with a year from 2000 to 2100, or null. */
export function parseMonth(text: string): string | null {
	const m = /^(\d{4})-(\d{2})$/.exec(text);
	if (!m) return null;
	const year = Number(m[1]);
	const month = Number(m[2]);
	if (year < 2000 || year > 2100 || month < 1 || month > 12) return null;
	return text;
}

function firstOfMonth(year: number, month: number, tz: string): DateTime {
	// Where local midnight does not exist (a zone that changes its clocks at 00:00), luxon
	// moves forward to the first wall-clock time that does: the month's first instant.
	const dt = DateTime.fromObject({ year, month, day: 1 }, { zone: tz });
	if (!dt.isValid) throw new Error(`Unknown time zone “${tz}”.`);
	return dt;
}

/** Local midnight on the 1st to local midnight on the next 1st, as instants. */
export function monthBounds(month: string, tz: string): MonthBounds {
	if (parseMonth(month) === null) throw new Error(`Not a month (YYYY-MM): “${month}”.`);
	const [year, m] = month.split('-').map(Number);
	return {
		start: firstOfMonth(year, m, tz).toJSDate(),
		end: (m === 12 ? firstOfMonth(year + 1, 1, tz) : firstOfMonth(year, m + 1, tz)).toJSDate()
	};
}

/** Is the month over (and so its statement final) at `now`? */
export function monthIsOver(month: string, tz: string, now: Date): boolean {
	return now >= monthBounds(month, tz).end;
}

/**
 * The hours of a booking billed inside the bounds (a month, or a report's range). A no-show
 * held the box only until its slot was freed; the rest may have gone to someone else.
 */
export function billedHoursIn(b: Billable, bounds: MonthBounds, charge = chargeOf(b)): number {
	return billedMsIn(b, bounds, charge) / HOUR_MS;
}

function billedMsIn(b: Billable, bounds: MonthBounds, charge: Charge): number {
	if (!charge.billable) return 0;
	const end =
		b.status === 'no_show' && b.heldUntil && b.heldUntil < b.endAt ? b.heldUntil : b.endAt;
	return msInMonth(b.startAt, end, bounds);
}

/** Real elapsed milliseconds of [startAt, endAt) inside the month's bounds. */
const msInMonth = (startAt: Date, endAt: Date, bounds: MonthBounds) =>
	msWithin(startAt, endAt, bounds.start, bounds.end);

/** Real elapsed hours of [startAt, endAt) inside the month's bounds. */
export function hoursInMonth(startAt: Date, endAt: Date, bounds: MonthBounds): number {
	return msInMonth(startAt, endAt, bounds) / HOUR_MS;
}

function usedMsInMonth(booking: UsageBooking, bounds: MonthBounds): number {
	if (!booking.checkInAt) return 0;
	const used = clip(
		booking.checkInAt,
		booking.checkOutAt ?? booking.endAt,
		booking.startAt,
		booking.endAt
	);
	return used ? msInMonth(used.start, used.end, bounds) : 0;
}

/** Hours checked in, from check-in to check-out (or the booked end), within the slot and month. */
export function usedHoursInMonth(booking: UsageBooking, bounds: MonthBounds): number {
	return usedMsInMonth(booking, bounds) / HOUR_MS;
}

/** "45 min", "3 h", "2 h 30 min", "2 d 15 h": a lead time in words. */
const duration = (minutes: number) => formatDuration(minutes, { days: true });

function userCancellation(b: Billable): Charge {
	if (b.confirmedAt === null)
		return {
			kind: 'cancelled',
			billable: false,
			reason: 'Withdrawn while waiting for approval: not billed.'
		};
	if (!b.cancelledAt)
		return {
			kind: 'cancelled',
			billable: false,
			reason: 'Cancelled (time not recorded): not billed.'
		};
	const leadMin = (b.startAt.getTime() - b.cancelledAt.getTime()) / 60_000;
	const windowMin = b.cancelWindowHours * 60;
	const window = `the ${duration(windowMin)} window`;
	if (leadMin <= 0) {
		const when = leadMin === 0 ? 'at the start' : `${duration(-leadMin)} after the start`;
		return {
			kind: 'late_cancellation',
			billable: true,
			reason: `Cancelled ${when}: billed as booked.`
		};
	}
	if (leadMin < windowMin) {
		return {
			kind: 'late_cancellation',
			billable: true,
			reason: `Cancelled ${duration(leadMin)} before the start, inside ${window}: billed as booked.`
		};
	}
	return {
		kind: 'cancelled',
		billable: false,
		reason:
			windowMin > 0
				? `Cancelled ${duration(leadMin)} before the start, before ${window}: not billed.`
				: `Cancelled ${duration(leadMin)} before the start: not billed.`
	};
}

/** How a booking is charged, and why, in words. */
export function chargeOf(b: Billable): Charge {
	switch (b.status) {
		case 'confirmed':
		case 'completed':
			return b.checkInAt
				? {
						kind: 'used',
						billable: true,
						reason: 'Checked in: the booked time is billed, not the time used.'
					}
				: {
						kind: 'booked_not_checked_in',
						billable: true,
						reason: 'Not checked in: billed as booked.'
					};
		case 'no_show':
			return {
				kind: 'no_show',
				billable: true,
				reason: b.heldUntil
					? 'No-show: billed for the time the box was held, until the rest of the slot was freed.'
					: 'No-show: the booked time is billed in full.'
			};
		case 'pending':
			return { kind: 'pending', billable: false, reason: 'Waiting for approval: not billed.' };
		case 'cancelled':
			if (b.cancelCause === 'outage')
				return {
					kind: 'outage_cancelled',
					billable: false,
					reason: 'Cancelled because the box was out of service: never billed.'
				};
			if (b.cancelCause === 'manager')
				return {
					kind: 'manager_cancelled',
					billable: false,
					reason: 'Cancelled by a manager: not billed.'
				};
			if (b.cancelCause === 'user') return userCancellation(b);
			return { kind: 'cancelled', billable: false, reason: 'Cancelled: not billed.' };
	}
}

/**
 * True when a confirmed booking has gone `graceMinutes` past its start without a check-in and
 * has not ended: the caller then marks it a no-show and frees the rest of its slot.
 */
export function noShowDue(
	b: Pick<UsageBooking, 'status' | 'startAt' | 'endAt' | 'checkInAt'>,
	graceMinutes: number,
	now: Date
): boolean {
	if (b.status !== 'confirmed' || b.checkInAt) return false;
	return now.getTime() >= b.startAt.getTime() + graceMinutes * 60_000 && now < b.endAt;
}

/** Why an hourly rate cannot be saved, or null when it can. */
export function checkRate(x: number): string | null {
	if (!Number.isFinite(x)) return 'The rate must be a number.';
	if (x < 0) return 'The rate cannot be negative.';
	if (x > MAX_RATE) return 'The rate cannot be more than 100,000 an hour.';
	return null;
}

/** Exact sums: milliseconds of time and cents of the rounded line amounts. */
type Sums = { bookedMs: number; usedMs: number; billedMs: number; amountCents: number };

const noSums = (): Sums => ({ bookedMs: 0, usedMs: 0, billedMs: 0, amountCents: 0 });

const totalsOf = (s: Sums): Totals => ({
	bookedHours: hoursOf(s.bookedMs),
	usedHours: hoursOf(s.usedMs),
	billedHours: hoursOf(s.billedMs),
	amountCents: s.amountCents
});

/**
 * The month's statement for the given bookings (one group's, as the caller chooses), in
 * the facility's currency.
 */
export function statement(
	bookings: UsageBooking[],
	month: string,
	tz: string,
	currency = DEFAULT_CURRENCY
): Statement {
	const bounds = monthBounds(month, tz);
	const inMonth = bookings
		.filter((b) => b.startAt < bounds.end && b.endAt > bounds.start)
		.sort((a, b) => a.startAt.getTime() - b.startAt.getTime() || a.id - b.id);

	const all = noSums();
	const boxes = new Map<number, Sums & { boxName: string }>();
	const lines = inMonth.map((b): Line => {
		const charge = chargeOf(b);
		const bookedMs = msInMonth(b.startAt, b.endAt, bounds);
		const usedMs = usedMsInMonth(b, bounds);
		// A no-show held the box only until its slot was freed; the rest may have been resold.
		const billedMs = billedMsIn(b, bounds, charge);
		const amountCents = lineCents(billedMs, b.rateCents);
		const box = boxes.get(b.boxId) ?? { boxName: b.boxName, ...noSums() };
		for (const s of [all, box]) {
			s.bookedMs += bookedMs;
			s.usedMs += usedMs;
			s.billedMs += billedMs;
			s.amountCents += amountCents;
		}
		boxes.set(b.boxId, box);
		return {
			bookingId: b.id,
			boxId: b.boxId,
			boxName: b.boxName,
			userName: b.userName,
			startAt: b.startAt,
			endAt: b.endAt,
			kind: charge.kind,
			reason: charge.reason,
			bookedHours: hoursOf(bookedMs),
			usedHours: hoursOf(usedMs),
			billedHours: hoursOf(billedMs),
			rateCents: b.rateCents,
			amountCents
		};
	});

	return {
		month,
		tz,
		currency,
		start: bounds.start,
		end: bounds.end,
		lines,
		totals: totalsOf(all),
		byBox: [...boxes]
			.map(([boxId, s]) => ({ boxId, boxName: s.boxName, ...totalsOf(s) }))
			.sort((a, b) => a.boxName.localeCompare(b.boxName) || a.boxId - b.boxId)
	};
}

/** Money as a snapshot holds it: in cents, or, taken before money was kept in cents, in units. */
type StoredMoney = { amountCents?: number; amount?: number };
type StoredLine = Omit<Line, 'rateCents' | 'amountCents'> &
	StoredMoney & { rateCents?: number; rate?: number };
type StoredStatement = Omit<Statement, 'currency' | 'lines' | 'totals' | 'byBox'> & {
	currency?: string;
	lines: StoredLine[];
	totals: Omit<Totals, 'amountCents'> & StoredMoney;
	byBox: (Omit<BoxTotals, 'amountCents'> & StoredMoney)[];
};

/** Units were stored to the cent, so reading their decimal form back is exact. */
const centsOf = ({ amountCents, amount }: StoredMoney) => amountCents ?? toCents(amount ?? 0);

/**
 * A closed month's statement read back from its JSON snapshot: instants from strings, and a
 * snapshot taken before money was kept in cents (amounts in units, no currency) read into
 * cents in `currency`, the facility's currency, which it was drawn up in.
 */
export function statementFromSnapshot(stored: unknown, currency: string): Statement {
	const s = stored as StoredStatement;
	const date = (v: Date | string) => new Date(v);
	return {
		...s,
		currency: s.currency ?? currency,
		start: date(s.start),
		end: date(s.end),
		lines: s.lines.map(({ rate, amount, ...l }) => ({
			...l,
			startAt: date(l.startAt),
			endAt: date(l.endAt),
			rateCents: l.rateCents ?? toCents(rate ?? 0),
			amountCents: centsOf({ amountCents: l.amountCents, amount })
		})),
		totals: (({ amount, ...t }) => ({ ...t, amountCents: centsOf({ ...t, amount }) }))(s.totals),
		byBox: s.byBox.map(({ amount, ...b }) => ({ ...b, amountCents: centsOf({ ...b, amount }) }))
	};
}

export const STATEMENT_CSV_HEADER =
	'booking_id,box,booked_by,start,end,status,reason,booked_hours,used_hours,billed_hours,rate,amount';

/**
 * One RFC 4180 field. Text that a spreadsheet would run as a formula (a leading =, +, -, @,
 * tab or CR) gets a leading apostrophe: names come from users, and statements are opened in
 * spreadsheets (OWASP, CSV injection).
 */
export function field(text: string): string {
	const safe = /^[=+\-@\t\r]/.test(text) ? `'${text}` : text;
	return /[",\r\n]/.test(safe) ? `"${safe.replaceAll('"', '""')}"` : safe;
}

/** Hours to their 2 decimals; they are rounded already. */
const num = (x: number) => x.toFixed(2);

/**
 * ISO 8601 with the facility zone's offset, to the second: 2026-10-25T01:00:00+02:00. A
 * statement read back from a JSON snapshot carries its times as strings; those work too.
 */
const isoSeconds = (at: Date | string, tz: string) =>
	local(new Date(at), tz).toISO({ suppressMilliseconds: true }) ?? '';

/**
 * The statement as CSV (RFC 4180: CRLF line ends, quoted fields): one line per booking, then
 * a `total` line that carries the group and month in its reason column. Rates and amounts
 * are plain decimals in the statement's currency (84.38), never with a currency sign.
 */
export function statementCsv(s: Statement, groupName: string): string {
	const rows = [STATEMENT_CSV_HEADER];
	for (const l of s.lines) {
		rows.push(
			[
				String(l.bookingId),
				field(l.boxName),
				field(l.userName),
				isoSeconds(l.startAt, s.tz),
				isoSeconds(l.endAt, s.tz),
				l.kind,
				field(l.reason),
				num(l.bookedHours),
				num(l.usedHours),
				num(l.billedHours),
				plainAmount(l.rateCents),
				plainAmount(l.amountCents)
			].join(',')
		);
	}
	const t = s.totals;
	rows.push(
		[
			'total',
			'',
			'',
			'',
			'',
			'',
			field(`${groupName} ${s.month}`),
			num(t.bookedHours),
			num(t.usedHours),
			num(t.billedHours),
			'',
			plainAmount(t.amountCents)
		].join(',')
	);
	return rows.map((r) => `${r}\r\n`).join('');
}
