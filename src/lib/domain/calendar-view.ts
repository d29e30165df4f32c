// How the calendar page writes its days and ranges, in the facility's format whatever the
// browser's language: "Fri 4 Dec" over a column, "30 Nov – 6 Dec 2026" over a week; never
// a numeric day/month whose order depends on the locale. Also when a sideways swipe on the
// grid means "the next day". Dates are calendar days (YYYY-MM-DD) on the facility's wall clock.
import { DateTime } from 'luxon';
import { FACILITY_LOCALE } from './time';
import { zoneOf } from './zone';

const day = (date: string) => DateTime.fromISO(date, { zone: 'UTC', locale: FACILITY_LOCALE });

/** A date whose local fields are the wall clock (what event-calendar hands out), as YYYY-MM-DD. */
export function ymd(d: Date): string {
	const pad = (n: number) => String(n).padStart(2, '0');
	return `${d.getFullYear()}-${pad(d.getMonth() + 1)}-${pad(d.getDate())}`;
}

/** Today's date on the facility's clock, YYYY-MM-DD. */
export const todayIn = (tz: string) => DateTime.now().setZone(zoneOf(tz)).toISODate()!;

/** YYYY-MM-DD `n` days later (or earlier). */
export const addDays = (date: string, n: number) => day(date).plus({ days: n }).toISODate()!;

/** A column's heading: "Fri 4 Dec". */
export const dayHeading = (date: string) => day(date).toFormat('ccc d LLL');

/** A day's heading in the list: "Friday 4 December". */
export const listDayHeading = (date: string) => day(date).toFormat('cccc d LLLL');

/**
 * The title over the grid for the days [start, end): "Friday 4 December 2026" for one day,
 * "7–13 Dec 2026" within a month, "30 Nov – 6 Dec 2026" across months, and
 * "28 Dec 2026 – 3 Jan 2027" across years.
 */
export function rangeTitle(start: string, end: string): string {
	const a = day(start);
	const b = day(end).minus({ days: 1 });
	if (b <= a) return a.toFormat('cccc d LLLL yyyy');
	if (a.year !== b.year) return `${a.toFormat('d LLL yyyy')} – ${b.toFormat('d LLL yyyy')}`;
	if (a.month !== b.month) return `${a.toFormat('d LLL')} – ${b.toFormat('d LLL yyyy')}`;
	return `${a.toFormat('d')}–${b.toFormat('d LLL yyyy')}`;
}

/** Whether `date` lies in the days [start, end). */
export const within = (date: string, start: string, end: string) => date >= start && date < end;

/**
 * A finger's move across the grid as a page turn: -1 (to the previous day, finger moved
 * right), 1 (the next, moved left), or 0 when it was a tap, a scroll up or down, or too short.
 * At least 60 px and clearly more sideways than up or down (twice as far), so scrolling
 * the hours is never taken for a swipe. Thresholds: common practice for touch gestures.
 */
export function swipeStep(dx: number, dy: number): -1 | 0 | 1 {
	if (Math.abs(dx) < 60 || Math.abs(dx) < 2 * Math.abs(dy)) return 0;
	return dx < 0 ? 1 : -1;
}
