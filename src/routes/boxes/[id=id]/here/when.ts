// Times on the phone page, short where they can be: today's on the 24-hour clock alone,
// another day's with the day written out, always on the facility's clock.
import { formatDateTime, formatRange, formatTime, local } from '$lib/domain/time';

const today = (at: Date, tz: string, now: Date) => local(at, tz).hasSame(local(now, tz), 'day');

/** "14:30" today, "Wed 3 Dec, 14:30" on another day. */
export function formTime(at: Date, tz: string, now = new Date()): string {
	return today(at, tz, now) ? formatTime(at, tz) : formatDateTime(at, tz);
}

/** "today 09:00–11:30" when it starts and ends today, else formatRange's "Wed 3 Dec, 09:00–11:30". */
export function formRange(start: Date, end: Date, tz: string, now = new Date()): string {
	return today(start, tz, now) && today(end, tz, now)
		? `today ${formatTime(start, tz)}–${formatTime(end, tz)}`
		: formatRange(start, end, tz);
}
