// The manager's reports: box time by ISO week, hours by group, no-shows and late
// cancellations, outage hours by kind, and glove wear. Pure: no I/O and no clock of its
// own; the caller loads the rows (bounded by the range) and passes `now`.
//
// - Weeks are ISO weeks (Monday 00:00 to the next Monday 00:00) on the facility's wall
//   clock. Hours are real elapsed hours, so the week summer time starts has 167 hours and
//   the week it ends 169. An interval across a week boundary counts in each week for the
//   hours that fall inside it.
// - Booked box time is confirmed, completed and no-show bookings: the box was held for
//   them. Bookings waiting for approval are not yet held and are left out.
// - A late cancellation is one by the booker made later than start − the box's
//   late-cancellation window (or after the start); it is billed as booked (see usage.ts).
//   Cancellations by a manager or for an outage are never the booker's doing.
import { outageKinds, type BookingStatus, type CancelCause, type OutageKind } from './bookings';
import { GLOVE_DUE_MONTHS, gloveState, isDamaged } from './gloves';
import { isoWeekOf, isoWeekStart, isoWeeksCovering, local, msWithin, type IsoWeek } from './time';
import { billedHoursIn, chargeOf } from './usage';

const HOUR_MS = 3_600_000;
const DAY_MS = 86_400_000;

/** The ranges the reports page offers, in weeks ending with the current one. */
export const REPORT_WEEK_CHOICES = [4, 8, 12] as const;
export type ReportWeeks = (typeof REPORT_WEEK_CHOICES)[number];
export const DEFAULT_REPORT_WEEKS: ReportWeeks = 8;

/** Statuses whose hours are booked box time: the box was held for them. */
export const BOOKED_STATUSES: readonly BookingStatus[] = ['confirmed', 'completed', 'no_show'];

/**
 * Statuses whose hours wear the gloves. A no-show is booked time nobody worked, so it adds
 * no wear; a confirmed booking in the past counts (bookings from before check-in existed
 * were never marked completed).
 */
export const WEAR_STATUSES: readonly BookingStatus[] = ['confirmed', 'completed'];

/**
 * A glove is due for a formal check when it has had none for this many days (its fitting
 * counts as one). Common practice: check formally weekly to monthly; this is the monthly
 * end, for lightly used boxes (REFERENCES.md, "Gloves").
 */
export const INSPECTION_INTERVAL_DAYS = 30;

/**
 * A glove is also due for a formal check after this many booked hours since its last check
 * (or its fitting). Common practice, no published figure: gloves are checked weekly to
 * monthly and replaced about yearly; 40 booked hours is about a full working week at the
 * box, so a heavily used glove is brought to the weekly end of that range while a lightly
 * used one waits for the monthly check above.
 */
export const INSPECT_AFTER_BOOKED_HOURS = 40;

export type Interval = { startAt: Date; endAt: Date };

/** An ISO week of time.ts, with its days for the page. */
export type Week = IsoWeek & {
	/** "23–29 Mar" on the facility clock. */
	label: string;
};

export type ReportBooking = Interval & {
	boxId: number;
	/** The group billed; null when the booker had none. */
	groupId: number | null;
	status: BookingStatus;
	cancelCause: CancelCause | null;
	cancelledAt: Date | null;
	/** Null when it was never confirmed (withdrawn while waiting for approval). */
	confirmedAt?: Date | null;
	/** For a no-show: when its slot was freed. */
	heldUntil?: Date | null;
};

export type ReportBox = { id: number; cancelWindowHours: number };

export type ReportOutage = Interval & { boxId: number; kind: OutageKind };

export type Range = { from: Date; to: Date };

function labelled(week: IsoWeek, tz: string): Week {
	const start = local(week.start, tz);
	const last = local(week.end, tz).minus({ days: 1 });
	const label =
		start.month === last.month
			? `${start.toFormat('d')}–${last.toFormat('d LLL')}`
			: `${start.toFormat('d LLL')}–${last.toFormat('d LLL')}`;
	return { ...week, label };
}

/** The ISO week (facility zone) that holds the instant `at`. */
export function weekOf(at: Date, tz: string): Week {
	return labelled(isoWeekOf(at, tz), tz);
}

/** The ISO weeks that overlap [from, to), in order, whole. */
export function weeksCovering(from: Date, to: Date, tz: string): Week[] {
	return isoWeeksCovering(from, to, tz).map((w) => labelled(w, tz));
}

/** The last `weeks` ISO weeks, ending with the one that holds `now` (so far and ahead). */
export function reportRange(weeks: number, now: Date, tz: string): Range {
	const current = isoWeekStart(now, tz);
	return {
		from: current.minus({ weeks: weeks - 1 }).toJSDate(),
		to: current.plus({ weeks: 1 }).toJSDate()
	};
}

/** The `?weeks=` choice, or the default when it is missing or not one on offer. */
export function parseReportWeeks(value: string | null | undefined): ReportWeeks {
	const n = Number(value);
	return REPORT_WEEK_CHOICES.find((c) => c === n) ?? DEFAULT_REPORT_WEEKS;
}

/** Real hours of [startAt, endAt) that fall inside [from, to). */
export function hoursWithin(i: Interval, from: Date, to: Date): number {
	return msWithin(i.startAt, i.endAt, from, to) / HOUR_MS;
}

/** An interval split into the ISO weeks it touches, with the real hours in each. */
export function splitByWeek(i: Interval, tz: string): { week: string; hours: number }[] {
	if (!(i.endAt > i.startAt)) return [];
	return weeksCovering(i.startAt, i.endAt, tz).map((w) => ({
		week: w.key,
		hours: hoursWithin(i, w.start, w.end)
	}));
}

/** Overlapping or touching intervals joined, so an hour covered twice counts once. */
export function mergeIntervals(list: Interval[]): Interval[] {
	const sorted = list
		.filter((i) => i.endAt > i.startAt)
		.sort((a, b) => a.startAt.getTime() - b.startAt.getTime());
	const merged: Interval[] = [];
	for (const i of sorted) {
		const last = merged.at(-1);
		if (last && i.startAt <= last.endAt) {
			if (i.endAt > last.endAt) last.endAt = i.endAt;
		} else merged.push({ startAt: i.startAt, endAt: i.endAt });
	}
	return merged;
}

export const isBooked = (status: BookingStatus) => BOOKED_STATUSES.includes(status);

/** A late cancellation by the booker, billed as booked: usage.ts's rule, asked of chargeOf. */
export function isLateCancellation(
	b: Pick<
		ReportBooking,
		'startAt' | 'endAt' | 'status' | 'cancelCause' | 'cancelledAt' | 'confirmedAt'
	>,
	cancelWindowHours: number
): boolean {
	return chargeOf({ ...b, cancelWindowHours, checkInAt: null }).kind === 'late_cancellation';
}

/** A box's hours against the whole of each week, so a quiet box reads as quiet. */
export type UtilisationCell = {
	week: string;
	bookedHours: number;
	/** Hours the box was out of service (outages joined, each hour once). */
	outageHours: number;
	weekHours: number;
	/** bookedHours / weekHours, 0–1. */
	share: number;
};

export type Utilisation = {
	boxId: number;
	cells: UtilisationCell[];
	/** The whole range: booked hours over every hour of its weeks. */
	bookedHours: number;
	outageHours: number;
	hours: number;
	share: number;
};

/** Booked box time of each box in each week, over the real hours of the week. */
export function utilisation(
	boxIds: number[],
	bookings: ReportBooking[],
	outages: ReportOutage[],
	weeks: Week[],
	tz: string
): Utilisation[] {
	const index = new Map(weeks.map((w, i) => [w.key, i]));
	const spread = (intervals: Interval[]) => {
		const sums = weeks.map(() => 0);
		for (const i of intervals)
			for (const part of splitByWeek(i, tz)) {
				const at = index.get(part.week);
				if (at !== undefined) sums[at] += part.hours;
			}
		return sums;
	};
	const total = weeks.reduce((s, w) => s + w.hours, 0);
	return boxIds.map((boxId) => {
		// Held bookings on a box only overlap where a no-show's freed slot was booked again;
		// joined, those hours count once and a week never passes 100 %.
		const booked = spread(
			mergeIntervals(bookings.filter((b) => b.boxId === boxId && isBooked(b.status)))
		);
		const out = spread(mergeIntervals(outages.filter((o) => o.boxId === boxId)));
		const bookedHours = booked.reduce((s, h) => s + h, 0);
		return {
			boxId,
			cells: weeks.map((w, i) => ({
				week: w.key,
				bookedHours: booked[i],
				outageHours: out[i],
				weekHours: w.hours,
				share: booked[i] / w.hours
			})),
			bookedHours,
			outageHours: out.reduce((s, h) => s + h, 0),
			hours: total,
			share: total ? bookedHours / total : 0
		};
	});
}

export type GroupHours = {
	groupId: number | null;
	/** Confirmed, completed and no-show hours in the range. */
	bookedHours: number;
	/** Hours of late cancellations by the booker: billed as booked. */
	lateCancelledHours: number;
	/** What the statements bill for these: a no-show only until its slot was freed. */
	billedHours: number;
	/** Bookings that add to billedHours. */
	bookings: number;
};

/** Booked and billed-as-booked hours per billed group inside the range, most first. */
export function hoursByGroup(
	bookings: ReportBooking[],
	boxes: ReportBox[],
	range: Range
): GroupHours[] {
	const windowOf = new Map(boxes.map((b) => [b.id, b.cancelWindowHours]));
	const groups = new Map<number | null, GroupHours>();
	for (const b of bookings) {
		const booked = isBooked(b.status);
		const late = !booked && isLateCancellation(b, windowOf.get(b.boxId) ?? 0);
		if (!booked && !late) continue;
		// What the statement bills: a no-show only until its slot was freed.
		const billed = billedHoursIn(
			{ ...b, cancelWindowHours: windowOf.get(b.boxId) ?? 0, checkInAt: null },
			{ start: range.from, end: range.to }
		);
		const hours = hoursWithin(b, range.from, range.to);
		if (!hours) continue;
		const g = groups.get(b.groupId) ?? {
			groupId: b.groupId,
			bookedHours: 0,
			lateCancelledHours: 0,
			billedHours: 0,
			bookings: 0
		};
		if (booked) g.bookedHours += hours;
		else g.lateCancelledHours += hours;
		g.billedHours += billed;
		g.bookings += 1;
		groups.set(b.groupId, g);
	}
	return [...groups.values()].sort(
		(a, b) => b.billedHours - a.billedHours || (a.groupId ?? Infinity) - (b.groupId ?? Infinity)
	);
}

export type RateCounts = {
	/** Bookings that were held when their start came: confirmed, completed or no-show. */
	due: number;
	noShows: number;
	/** noShows / due, or null when nothing was due. */
	noShowRate: number | null;
	/** Every booking, less those a manager or an outage cancelled (the booker had no say). */
	bookings: number;
	lateCancellations: number;
	/** lateCancellations / bookings, or null when there were none. */
	lateCancellationRate: number | null;
};

function counts(): RateCounts {
	return {
		due: 0,
		noShows: 0,
		noShowRate: null,
		bookings: 0,
		lateCancellations: 0,
		lateCancellationRate: null
	};
}

function settle(c: RateCounts): RateCounts {
	c.noShowRate = c.due ? c.noShows / c.due : null;
	c.lateCancellationRate = c.bookings ? c.lateCancellations / c.bookings : null;
	return c;
}

/**
 * No-show and late-cancellation rates per box and overall, over the bookings that start
 * inside the range (each booking counted once, in the range its start falls in). A booking
 * is due once its start has passed at `now`.
 */
export function bookingRates(
	bookings: ReportBooking[],
	boxes: ReportBox[],
	range: Range,
	now: Date
): { byBox: (RateCounts & { boxId: number })[]; overall: RateCounts } {
	const byBox = new Map(boxes.map((b) => [b.id, counts()]));
	const windowOf = new Map(boxes.map((b) => [b.id, b.cancelWindowHours]));
	const overall = counts();
	for (const b of bookings) {
		if (b.startAt < range.from || b.startAt >= range.to) continue;
		const box = byBox.get(b.boxId);
		if (!box) continue;
		const sums = [box, overall];
		if (isBooked(b.status) && b.startAt <= now)
			for (const c of sums) {
				c.due += 1;
				if (b.status === 'no_show') c.noShows += 1;
			}
		const notTheirs =
			b.status === 'cancelled' && (b.cancelCause === 'manager' || b.cancelCause === 'outage');
		if (!notTheirs)
			for (const c of sums) {
				c.bookings += 1;
				if (isLateCancellation(b, windowOf.get(b.boxId) ?? 0)) c.lateCancellations += 1;
			}
	}
	return {
		byBox: boxes.map((b) => ({ boxId: b.id, ...settle(byBox.get(b.id)!) })),
		overall: settle(overall)
	};
}

export type OutageKindHours = {
	kind: OutageKind;
	/** Hours inside the range, summed over boxes. */
	hours: number;
	byBox: { boxId: number; hours: number }[];
};

/** Out-of-service hours inside the range, by kind (every kind, in order) and box. */
export function outageHoursByKind(
	outages: ReportOutage[],
	boxIds: number[],
	range: Range
): OutageKindHours[] {
	return outageKinds.map((kind) => {
		// Two outages of one kind on one box overlapping count their common hours once.
		const byBox = boxIds.map((boxId) => ({
			boxId,
			hours: mergeIntervals(outages.filter((o) => o.kind === kind && o.boxId === boxId)).reduce(
				(s, o) => s + hoursWithin(o, range.from, range.to),
				0
			)
		}));
		return { kind, hours: byBox.reduce((s, b) => s + b.hours, 0), byBox };
	});
}

export type GloveFlag = 'ok' | 'inspect' | 'replace';

export const gloveFlagLabel: Record<GloveFlag, string> = {
	ok: 'Sound',
	inspect: 'Inspect',
	replace: 'Replace'
};

/** The shape that goes with each flag, so it never rests on colour alone. */
export const gloveFlagShape: Record<GloveFlag, string> = { ok: '●', inspect: '▲', replace: '✕' };

export type WearInspection = { at: Date; damaged: boolean; action: string };

export type GloveWear = {
	/** Confirmed and completed hours on the box since the glove was fitted, up to now. */
	bookedHours: number;
	ageDays: number;
	/** The last check since the fitting: an inspection of this glove, or a logged glove check of its box. */
	lastInspectionAt: Date | null;
	/** The last inspection, or the fitting when there has been none since. */
	lastCheckAt: Date;
	daysSinceCheck: number;
	bookedHoursSinceCheck: number;
	damaged: boolean;
	flag: GloveFlag;
	/** Why, in words; empty when the glove is sound. */
	reasons: string[];
};

const plural = (n: number, word: string) => `${n} ${word}${n === 1 ? '' : 's'}`;

/**
 * Wear of one fitted glove: booked hours on its box since it was fitted, age, and whether it
 * is due. Replace: damage reported (until a report says it was replaced) or GLOVE_DUE_MONTHS
 * of age (gloves.ts's rule, the one the box face uses). Inspect: no check for
 * INSPECTION_INTERVAL_DAYS, or more than INSPECT_AFTER_BOOKED_HOURS booked since the last.
 *
 * A check is an inspection recorded on the glove, or a glove-inspection maintenance task
 * (upkeep.ts's `glove_inspection`) logged as done on its box: that routine check goes over
 * every glove on the box, so it counts for each of them.
 */
export function gloveWear(p: {
	installedAt: Date;
	inspections: WearInspection[];
	/** When a glove-inspection task on the glove's box was logged as done. */
	boxChecks?: Date[];
	/** The box's bookings (any status; only WEAR_STATUSES count). */
	bookings: (Interval & { status: BookingStatus })[];
	now: Date;
}): GloveWear {
	const { installedAt, now } = p;
	const worn = p.bookings.filter((b) => WEAR_STATUSES.includes(b.status));
	const bookedSince = (from: Date) => worn.reduce((s, b) => s + hoursWithin(b, from, now), 0);
	const checks = [...p.inspections.map((i) => i.at), ...(p.boxChecks ?? [])];
	const last = checks
		.filter((at) => at >= installedAt && at <= now)
		.reduce<Date | null>((a, at) => (!a || at > a ? at : a), null);
	const lastCheckAt = last ?? installedAt;
	const damaged = isDamaged(p.inspections);
	const ageDays = Math.max(0, Math.floor((now.getTime() - installedAt.getTime()) / DAY_MS));
	const daysSinceCheck = Math.max(0, Math.floor((now.getTime() - lastCheckAt.getTime()) / DAY_MS));
	const bookedHoursSinceCheck = bookedSince(lastCheckAt);

	const old = gloveState({ installedAt, damaged: false, changeUnderWay: false, now }) === 'due';
	const reasons: string[] = [];
	if (damaged) reasons.push('Damage reported.');
	if (old) reasons.push(`${GLOVE_DUE_MONTHS} months or older; gloves are replaced about yearly.`);
	const unchecked = daysSinceCheck >= INSPECTION_INTERVAL_DAYS;
	if (unchecked)
		reasons.push(
			last
				? `Last inspected ${plural(daysSinceCheck, 'day')} ago.`
				: `Not inspected since it was fitted ${plural(daysSinceCheck, 'day')} ago.`
		);
	const heavy = bookedHoursSinceCheck > INSPECT_AFTER_BOOKED_HOURS;
	if (heavy)
		reasons.push(
			`${Math.round(bookedHoursSinceCheck * 10) / 10} booked hours since the last check (more than ${INSPECT_AFTER_BOOKED_HOURS}).`
		);
	return {
		bookedHours: bookedSince(installedAt),
		ageDays,
		lastInspectionAt: last,
		lastCheckAt,
		daysSinceCheck,
		bookedHoursSinceCheck,
		damaged,
		flag: damaged || old ? 'replace' : unchecked || heavy ? 'inspect' : 'ok',
		reasons
	};
}
