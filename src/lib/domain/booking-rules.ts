// The booking rules of DESIGN.md, as a pure function: no I/O, no clock of its own.
// The server calls it inside a transaction that holds the box's row lock, with what it
// just re-read; the client may call it for early hints.
import type { AtmosphereState, BoxStatus } from './boxes';
import { chemicalClasses } from './boxes';
import type { BookingStatus } from './bookings';
import { formatDateTime, formatRange, local, minutesBetween } from './time';

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
	/** Held bookings on this box that end (with purge) after the request's window opens. */
	others: HeldBooking[];
	outages: OutageSpan[];
	/** The user's held bookings on this box in the ISO weeks the request touches. */
	userBookings: { startAt: Date; endAt: Date }[];
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
	| 'overlaps_purge';

export type Conflict = {
	kind: 'booking' | 'pending' | 'purge' | 'outage';
	id: number;
	start: Date;
	end: Date;
};

export type Reason = { code: ReasonCode; message: string; conflict?: Conflict };

export type RuleResult = { reasons: Reason[]; conflicts: Conflict[] };

const overlaps = (aStart: Date, aEnd: Date, bStart: Date, bEnd: Date) =>
	aStart < bEnd && bStart < aEnd;

function hours(minutes: number): string {
	if (minutes % 60 === 0) return `${minutes / 60} h`;
	if (minutes < 60) return `${minutes} min`;
	return `${Math.floor(minutes / 60)} h ${minutes % 60} min`;
}

/** The ISO weeks of the zone that [start, end) touches, as UTC windows keyed "2026-W49". */
export function isoWeeks(start: Date, end: Date, tz: string) {
	const weeks: { key: string; from: Date; to: Date }[] = [];
	let cursor = local(start, tz).startOf('week');
	const stop = local(end, tz);
	while (cursor < stop) {
		const next = cursor.plus({ weeks: 1 });
		weeks.push({
			key: `${cursor.weekYear}-W${String(cursor.weekNumber).padStart(2, '0')}`,
			from: cursor.toJSDate(),
			to: next.toJSDate()
		});
		cursor = next;
	}
	return weeks;
}

/** Minutes of [start, end) inside [from, to), by plain arithmetic (this runs per booking). */
function minutesWithin(start: Date, end: Date, from: Date, to: Date): number {
	const a = Math.max(start.getTime(), from.getTime());
	const b = Math.min(end.getTime(), to.getTime());
	return b > a ? (b - a) / 60_000 : 0;
}

/** Minutes of [start, end) falling in each ISO week of the zone. */
export function minutesPerIsoWeek(start: Date, end: Date, tz: string): Map<string, number> {
	return new Map(
		isoWeeks(start, end, tz).map((w) => [w.key, minutesWithin(start, end, w.from, w.to)])
	);
}

/** Is the instant on the box's slot grid, in wall-clock minutes of the facility zone? */
function onStep(at: Date, stepMin: number, tz: string): boolean {
	const t = local(at, tz);
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
	if (req.start < now) add('start_in_past', 'The booking would start in the past.');
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
		add('too_short', `The shortest booking is ${hours(box.minLengthMin)}.`);
	if (length > box.maxLengthMin)
		add(
			'too_long',
			`The longest booking is ${hours(box.maxLengthMin)}; this one is ${hours(length)}.`
		);

	// Weekly quota, per ISO week of the facility's zone.
	for (const week of isoWeeks(req.start, req.end, tz)) {
		let used = 0;
		for (const b of ctx.userBookings) used += minutesWithin(b.startAt, b.endAt, week.from, week.to);
		const total = used + minutesWithin(req.start, req.end, week.from, week.to);
		if (total > box.weeklyQuotaMin) {
			const left = Math.max(0, box.weeklyQuotaMin - used);
			add(
				'quota_exceeded',
				`This would take you to ${hours(total)} on this box in week ${week.key.slice(-2)}; the limit is ${hours(box.weeklyQuotaMin)} a week (${hours(left)} left).`
			);
		}
	}

	const excluded = req.chemicalClasses.filter((c) => box.excludedClasses.includes(c));
	for (const c of excluded) {
		const label = chemicalClasses[c as keyof typeof chemicalClasses] ?? c;
		add('excluded_chemical', `${label} may not be used in this box.`);
	}

	// Overlaps: other bookings, pending holds, purge buffers (theirs after them, ours after us).
	const conflicts: Conflict[] = [];
	const ownBlockedUntil = req.volatileSolvents
		? new Date(req.end.getTime() + box.purgeMin * 60_000)
		: req.end;
	for (const other of ctx.others) {
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
		} else if (overlaps(req.end, ownBlockedUntil, other.startAt, other.endAt)) {
			const conflict: Conflict = {
				kind: 'purge',
				id: other.id,
				start: req.end,
				end: ownBlockedUntil
			};
			conflicts.push(conflict);
			add(
				'overlaps_purge',
				`Volatile solvents need ${hours(box.purgeMin)} of purge after the booking, but the next booking starts ${formatDateTime(other.startAt, tz)}.`,
				conflict
			);
		}
	}
	for (const outage of ctx.outages) {
		if (overlaps(req.start, ownBlockedUntil, outage.startAt, outage.endAt)) {
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

	return { reasons, conflicts };
}

/** 409 when only overlaps stand in the way (another request got there first), else 422. */
export function refusalStatus(result: RuleResult): 409 | 422 | null {
	if (!result.reasons.length) return null;
	return result.reasons.every((r) => r.conflict) ? 409 : 422;
}
