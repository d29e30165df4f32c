import { local } from './time';

export const bookingStatuses = [
	'pending',
	'confirmed',
	'cancelled',
	'completed',
	'no_show'
] as const;
export type BookingStatus = (typeof bookingStatuses)[number];

/** Statuses that hold box time (and count towards the weekly quota). */
export const holdingStatuses: BookingStatus[] = ['pending', 'confirmed', 'completed', 'no_show'];

/**
 * Statuses of a booking still to be worked: it keeps others out of its hold, an outage over
 * its hold cancels it, and its holder or a manager may still cancel or move it.
 */
export const openStatuses: BookingStatus[] = ['pending', 'confirmed'];

export const cancelCauses = ['user', 'manager', 'outage'] as const;
export type CancelCause = (typeof cancelCauses)[number];

export const outageKinds = [
	'glove_change',
	'regeneration',
	'leak',
	'sensor',
	'atmosphere',
	'other'
] as const;
export type OutageKind = (typeof outageKinds)[number];

export const outageKindLabel: Record<OutageKind, string> = {
	glove_change: 'Glove change',
	regeneration: 'Purifier regeneration',
	leak: 'Leak',
	sensor: 'Sensor fault',
	atmosphere: 'Atmosphere out of spec',
	other: 'Other upkeep'
};

export const statusLabel: Record<BookingStatus, string> = {
	pending: 'Waiting for approval',
	confirmed: 'Confirmed',
	cancelled: 'Cancelled',
	completed: 'Completed',
	no_show: 'No-show'
};

/** The longest booking a box may allow (the box editor's limit, 7 days). */
export const LONGEST_BOOKING_MS = 7 * 86_400_000;
/** The longest purge after volatile solvents a box may set (the box editor's limit, 12 h). */
export const LONGEST_PURGE_MS = 12 * 3_600_000;
/**
 * A hold (booking plus purge) that reaches an instant started at most this long before it:
 * the lower bound on start_at that lets range reads use the (…, start_at) indexes.
 */
export const LONGEST_HOLD_MS = LONGEST_BOOKING_MS + LONGEST_PURGE_MS;

/** How many weeks a weekly series may run, the first week included. */
export const MAX_REPEAT_WEEKS = 12;

/** One week's slot of a weekly series; `missing` when its wall-clock time does not exist. */
export type WeeklySlot = { start: Date; end: Date; missing: boolean };

/**
 * The same wall-clock slot on each of `weeks` weeks from the first (the first included), on
 * the facility's clock: 09:00–11:00 stays 09:00–11:00 across a daylight-saving change, so
 * the instants move by an hour. A start or end that falls in the hour skipped in spring does
 * not exist that week (`missing`; luxon's shifted instant is kept to name the week).
 */
export function weeklySlots(start: Date, end: Date, weeks: number, tz: string): WeeklySlot[] {
	const a = local(start, tz);
	const b = local(end, tz);
	return Array.from({ length: weeks }, (_, k) => {
		const s = a.plus({ weeks: k });
		const e = b.plus({ weeks: k });
		const missing =
			s.toFormat('HH:mm') !== a.toFormat('HH:mm') || e.toFormat('HH:mm') !== b.toFormat('HH:mm');
		return { start: s.toJSDate(), end: e.toJSDate(), missing };
	});
}
