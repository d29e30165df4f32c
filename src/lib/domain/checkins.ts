// When a booking can be checked in and out. The check-in and check-out readings are what
// "hours actually used" and no-shows are worked out from.

/** Check-in opens this many minutes before the booking starts. */
export const CHECK_IN_OPENS_MIN = 15;
/** A check-out is prompted from this many minutes before the end. */
export const CHECK_OUT_PROMPT_MIN = 15;
/** A forgotten check-out can still be made this many hours after the end. */
export const CHECK_OUT_CLOSES_H = 12;

export type CheckState = {
	status: string;
	startAt: Date;
	endAt: Date;
	checkInAt: Date | null;
	checkOutAt: Date | null;
};

const minutes = (m: number) => m * 60_000;

/** Why the booking cannot be checked in now, or null when it can. */
export function checkInRefusal(b: CheckState, now: Date): string | null {
	if (b.status !== 'confirmed')
		return `A ${b.status.replace('_', '-')} booking cannot be checked in.`;
	if (b.checkInAt) return 'This booking is already checked in.';
	if (now.getTime() < b.startAt.getTime() - minutes(CHECK_IN_OPENS_MIN))
		return `Check-in opens ${CHECK_IN_OPENS_MIN} minutes before the booking starts.`;
	if (now >= b.endAt) return 'This booking has ended; it can no longer be checked in.';
	return null;
}

/** Why the booking cannot be checked out now, or null when it can. */
export function checkOutRefusal(b: CheckState, now: Date): string | null {
	if (!b.checkInAt) return 'Check in first.';
	if (b.checkOutAt) return 'This booking is already checked out.';
	if (now.getTime() > b.endAt.getTime() + CHECK_OUT_CLOSES_H * 3_600_000)
		return `Check-out closes ${CHECK_OUT_CLOSES_H} hours after the booking ends.`;
	return null;
}

/** What the app should prompt its holder to do about the booking right now. */
export function checkPrompt(b: CheckState, now: Date): 'check_in' | 'check_out' | null {
	if (checkInRefusal(b, now) === null) return 'check_in';
	if (
		checkOutRefusal(b, now) === null &&
		now.getTime() >= b.endAt.getTime() - minutes(CHECK_OUT_PROMPT_MIN)
	)
		return 'check_out';
	return null;
}

/**
 * What the booking's holder can do now, for a button: check in (or, already in, check out),
 * or nothing. Pages offer the button; the check page and the service decide.
 */
export function checkAction(b: CheckState, now: Date): 'in' | 'out' | null {
	if (checkInRefusal(b, now) === null) return 'in';
	if (checkOutRefusal(b, now) === null) return 'out';
	return null;
}
