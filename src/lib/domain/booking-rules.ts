// The booking rules of DESIGN.md, as a pure function: no I/O, no clock of its own.
// The server calls it inside a transaction that holds the box's row lock, with what it
// just re-read; the client may call it for early hints.
import type { AtmosphereState, BoxStatus } from './boxes';
import { chemicalClasses } from './boxes';
import type { BookingStatus, WeeklySlot } from './bookings';
import type { CertificationState } from './certifications';
import {
	formatDate,
	formatDateTime,
	formatDuration,
	formatRange,
	isoWeekOf,
	isoWeeksCovering,
	local,
	minutesBetween,
	msWithin
} from './time';
import { wallParts } from './wall-clock';

export type RuleBox = {
	status: BoxStatus;
	atmosphereState: AtmosphereState;
	slotStepMin: number;
	minLengthMin: number;
	maxLengthMin: number;
	horizonDays: number;
	weeklyQuotaMin: number;
	purgeMin: number;
	excludedClasses: string[];
	requiredModules: { id: number; name: string }[];
};

/**
 * The time a booking keeps the box from everyone else: [startAt, blockedUntil), its end plus
 * the box's purge time when volatile solvents are declared (purgeEnd), or until a no-show
 * freed it. An outage or another booking overlapping that span collides with it.
 */
export type Hold = { startAt: Date; blockedUntil: Date };

/** A span of time, [startAt, endAt): an outage, or a booking's own slot. */
export type Span = { startAt: Date; endAt: Date };

/**
 * The one overlap rule: does a hold collide with a span? The same question refuses a new
 * booking that an outage would overlap (checkBooking) and picks the bookings an outage
 * cancels (services/outages.ts, whose SQL selects by the same span).
 */
export function holdOverlaps(hold: Hold, span: Span): boolean {
	return hold.startAt < span.endAt && span.startAt < hold.blockedUntil;
}

/** Where a booking's hold ends: after the box's purge time when volatile solvents are declared. */
export function purgeEnd(
	booking: { end: Date; volatileSolvents: boolean },
	purgeMin: number
): Date {
	return booking.volatileSolvents
		? new Date(booking.end.getTime() + purgeMin * 60_000)
		: booking.end;
}

/** A booking that holds time on the box (pending, confirmed, completed or no-show). */
export type HeldBooking = {
	id: number;
	startAt: Date;
	endAt: Date;
	blockedUntil: Date;
	status: BookingStatus;
};

export type OutageSpan = { id: number; startAt: Date; endAt: Date; reason: string };

/** A certification that has not been revoked. */
export type HeldCertification = { moduleId: number; grantedAt: Date; expiresAt: Date };

export type BookingRequest = {
	start: Date;
	end: Date;
	volatileSolvents: boolean;
	chemicalClasses: string[];
};

export type RuleContext = {
	now: Date;
	tz: string;
	box: RuleBox;
	certifications: HeldCertification[];
	/**
	 * Held bookings on this box near the request: at least every one whose hold overlaps the
	 * request's. The server reads up to the longest purge a box may set; holdOverlaps keeps
	 * what reaches this box's own.
	 */
	others: HeldBooking[];
	/** Outages near the request: at least every one its hold overlaps. */
	outages: OutageSpan[];
	/** The user's held bookings on this box in the ISO weeks the request touches. */
	userBookings: { startAt: Date; endAt: Date }[];
	/**
	 * The booking being moved, as it stands (its own hold is left out of `others` and
	 * `userBookings`): one under way may keep its start while its end changes.
	 */
	current?: { start: Date };
};

export type ReasonCode =
	| 'certification_missing'
	| 'certification_expires'
	| 'box_out_of_service'
	| 'atmosphere_alarm'
	| 'start_in_past'
	| 'outside_horizon'
	| 'quota_exceeded'
	| 'bad_step'
	| 'too_short'
	| 'too_long'
	| 'excluded_chemical'
	| 'overlaps_booking'
	| 'overlaps_pending'
	| 'overlaps_purge'
	| 'no_such_time';

export type Conflict = {
	kind: 'booking' | 'pending' | 'purge' | 'outage';
	id: number;
	start: Date;
	end: Date;
};

export type Reason = { code: ReasonCode; message: string; conflict?: Conflict };

export type RuleResult = {
	reasons: Reason[];
	conflicts: Conflict[];
	/** The end of the hold that was checked (purgeEnd): what the booking stores. */
	blockedUntil: Date;
};

const overlaps = (aStart: Date, aEnd: Date, bStart: Date, bEnd: Date) =>
	aStart < bEnd && bStart < aEnd;

/** Minutes of [start, end) inside [from, to). */
const minutesWithin = (start: Date, end: Date, from: Date, to: Date) =>
	msWithin(start, end, from, to) / 60_000;

/** Minutes of [start, end) falling in each ISO week of the zone. */
export function minutesPerIsoWeek(start: Date, end: Date, tz: string): Map<string, number> {
	return new Map(
		isoWeeksCovering(start, end, tz).map((w) => [w.key, minutesWithin(start, end, w.start, w.end)])
	);
}

/**
 * The whole ISO weeks (facility zone) a request touches, as one span: where the quota rule
 * needs the user's other bookings.
 */
export function quotaSpan(start: Date, end: Date, tz: string): { start: Date; end: Date } {
	const last = new Date(Math.max(start.getTime(), end.getTime() - 1));
	return { start: isoWeekOf(start, tz).start, end: isoWeekOf(last, tz).end };
}

/** Is the instant on the box's slot grid, in wall-clock minutes of the facility zone? */
function onStep(at: Date, stepMin: number, tz: string): boolean {
	// luxon's DateTime has the same fields, for a zone name wallParts leaves to it ('UTC').
	const t = wallParts(at, tz) ?? local(at, tz);
	return t.second === 0 && t.millisecond === 0 && (t.hour * 60 + t.minute) % stepMin === 0;
}

export function checkBooking(req: BookingRequest, ctx: RuleContext): RuleResult {
	const { box, tz, now } = ctx;
	const reasons: Reason[] = [];
	const add = (code: ReasonCode, message: string, conflict?: Conflict) =>
		reasons.push(conflict ? { code, message, conflict } : { code, message });

	// Training: every required module held from the start through the end of the booking.
	for (const module of box.requiredModules) {
		const held = ctx.certifications.filter(
			(c) => c.moduleId === module.id && c.grantedAt <= req.start && c.expiresAt > req.start
		);
		if (!held.length) {
			add(
				'certification_missing',
				`You need a current “${module.name}” certification for this box.`
			);
		} else if (!held.some((c) => c.expiresAt >= req.end)) {
			const latest = held.reduce((a, b) => (a.expiresAt > b.expiresAt ? a : b));
			add(
				'certification_expires',
				`Your “${module.name}” certification expires ${formatDateTime(latest.expiresAt, tz)}, before this booking ends. Renew it first.`
			);
		}
	}

	if (box.status === 'out_of_service') add('box_out_of_service', 'The box is out of service.');
	if (box.atmosphereState === 'alarm') {
		add(
			'atmosphere_alarm',
			'The box is in atmosphere alarm; no new bookings until it is back in spec.'
		);
	}

	// Times and lengths.
	const length = minutesBetween(req.start, req.end);
	const keepsItsStart = ctx.current?.start.getTime() === req.start.getTime();
	if (req.start < now && !keepsItsStart)
		add('start_in_past', 'The booking would start in the past.');
	const horizon = new Date(now.getTime() + box.horizonDays * 86_400_000);
	if (req.start > horizon) {
		add(
			'outside_horizon',
			`Bookings open ${box.horizonDays} days ahead; this one starts later than that.`
		);
	}
	if (!onStep(req.start, box.slotStepMin, tz) || !onStep(req.end, box.slotStepMin, tz)) {
		add(
			'bad_step',
			`Start and end must fall on the ${box.slotStepMin}-minute grid (e.g. 09:00, 09:${String(box.slotStepMin).padStart(2, '0')}).`
		);
	}
	if (length < box.minLengthMin)
		add('too_short', `The shortest booking is ${formatDuration(box.minLengthMin)}.`);
	if (length > box.maxLengthMin)
		add(
			'too_long',
			`The longest booking is ${formatDuration(box.maxLengthMin)}; this one is ${formatDuration(length)}.`
		);

	// Weekly quota, per ISO week of the facility's zone.
	for (const week of isoWeeksCovering(req.start, req.end, tz)) {
		let used = 0;
		for (const b of ctx.userBookings)
			used += minutesWithin(b.startAt, b.endAt, week.start, week.end);
		const total = used + minutesWithin(req.start, req.end, week.start, week.end);
		if (total > box.weeklyQuotaMin) {
			const left = Math.max(0, box.weeklyQuotaMin - used);
			add(
				'quota_exceeded',
				`This would take you to ${formatDuration(total)} on this box in week ${week.key.slice(-2)}; the limit is ${formatDuration(box.weeklyQuotaMin)} a week (${formatDuration(left)} left).`
			);
		}
	}

	const excluded = req.chemicalClasses.filter((c) => box.excludedClasses.includes(c));
	for (const c of excluded) {
		const label = chemicalClasses[c as keyof typeof chemicalClasses] ?? c;
		add('excluded_chemical', `${label} may not be used in this box.`);
	}

	// Overlaps, one rule (holdOverlaps) for all of them: the request holds the box until its
	// purge ends, and so does every other booking; an outage may overlap no part of that.
	const conflicts: Conflict[] = [];
	const blockedUntil = purgeEnd(req, box.purgeMin);
	const hold: Hold = { startAt: req.start, blockedUntil };
	for (const other of ctx.others) {
		if (!holdOverlaps(hold, { startAt: other.startAt, endAt: other.blockedUntil })) continue;
		// Which part meets which, for the message: their slot, their purge, or our purge.
		if (overlaps(req.start, req.end, other.startAt, other.endAt)) {
			const pending = other.status === 'pending';
			const conflict: Conflict = {
				kind: pending ? 'pending' : 'booking',
				id: other.id,
				start: other.startAt,
				end: other.endAt
			};
			conflicts.push(conflict);
			add(
				pending ? 'overlaps_pending' : 'overlaps_booking',
				pending
					? `A booking waiting for approval holds ${formatRange(other.startAt, other.endAt, tz)}.`
					: `The box is booked ${formatRange(other.startAt, other.endAt, tz)}.`,
				conflict
			);
		} else if (overlaps(req.start, req.end, other.endAt, other.blockedUntil)) {
			const conflict: Conflict = {
				kind: 'purge',
				id: other.id,
				start: other.endAt,
				end: other.blockedUntil
			};
			conflicts.push(conflict);
			add(
				'overlaps_purge',
				`The box is being purged after volatile-solvent work until ${formatDateTime(other.blockedUntil, tz)}.`,
				conflict
			);
		} else {
			const conflict: Conflict = {
				kind: 'purge',
				id: other.id,
				start: req.end,
				end: blockedUntil
			};
			conflicts.push(conflict);
			add(
				'overlaps_purge',
				`Volatile solvents need ${formatDuration(box.purgeMin)} of purge after the booking, but the next booking starts ${formatDateTime(other.startAt, tz)}.`,
				conflict
			);
		}
	}
	for (const outage of ctx.outages) {
		if (holdOverlaps(hold, outage)) {
			const conflict: Conflict = {
				kind: 'outage',
				id: outage.id,
				start: outage.startAt,
				end: outage.endAt
			};
			conflicts.push(conflict);
			// A rule, not a race: the box is out of service then, whoever asks.
			add(
				'box_out_of_service',
				`The box is out of service ${formatRange(outage.startAt, outage.endAt, tz)} (${outage.reason}).`
			);
		}
	}

	return { reasons, conflicts, blockedUntil };
}

/** 409 when only overlaps stand in the way (another request got there first), else 422. */
export function refusalStatus(result: RuleResult): 409 | 422 | null {
	if (!result.reasons.length) return null;
	return result.reasons.every((r) => r.conflict) ? 409 : 422;
}

/**
 * Is a span free of every hold and outage on the box? What a watch waits for: the same
 * overlap rule (holdOverlaps) that refuses a booking, so "free" means a booking of exactly
 * that time would not collide with anything.
 */
export function spanIsFree(span: Span, holds: Hold[], outages: Span[]): boolean {
	return (
		!holds.some((h) => holdOverlaps(h, span)) &&
		!outages.some((o) => holdOverlaps({ startAt: o.startAt, blockedUntil: o.endAt }, span))
	);
}

/** The refusal of a week of a series whose wall-clock time does not exist (weeklySlots). */
export function missingTimeReason(slot: WeeklySlot, tz: string): Reason {
	return {
		code: 'no_such_time',
		message: `The clocks change that night: this time does not exist on ${formatDate(slot.start, tz)}.`
	};
}

/**
 * Why a person cannot book a box at all, in words, for the box picker: a required module
 * not held (never, lapsed or revoked), the box out of service or in atmosphere alarm. Empty
 * when nothing stands in the way; checkBooking still decides each booking.
 */
export function boxBlockers(
	box: {
		status: BoxStatus;
		atmosphereState: AtmosphereState;
		requiredModules: { id: number; name: string }[];
	},
	standing: Map<number, CertificationState>
): string[] {
	const why: string[] = [];
	for (const m of box.requiredModules) {
		const state = standing.get(m.id) ?? 'none';
		if (state === 'current' || state === 'expiring') continue;
		const how = state === 'expired' ? ' (expired)' : state === 'revoked' ? ' (revoked)' : '';
		why.push(`Needs the “${m.name}” certification${how}.`);
	}
	if (box.status === 'out_of_service') why.push('The box is out of service.');
	if (box.atmosphereState === 'alarm') why.push('The box is in atmosphere alarm.');
	return why;
}
