import { DateTime } from 'luxon';
import {
	isoWeekAt,
	isoWeeksBetween,
	onSameDay,
	wallParts,
	type IsoWeek,
	type WallParts
} from './wall-clock';
import { zoneOf } from './zone';

export type { IsoWeek } from './wall-clock';

/**
 * The language of every date Boxwright writes out (weekday and month names), fixed so that
 * the server's render and the browser's agree whatever either one's language is.
 */
export const FACILITY_LOCALE = 'en-GB';

/** Local wall-clock parts of an instant in the facility's zone. */
export function local(at: Date, tz: string): DateTime {
	return DateTime.fromJSDate(at, { zone: zoneOf(tz) }).setLocale(FACILITY_LOCALE);
}

/**
 * A time of day as people type it on the 24-hour clock: "14:30", "9:30", "0930", "930",
 * "14.30", "14h30", or just the hour ("9", "14"). Minutes are always two digits, so "9:5"
 * (09:05 or 09:50?) is refused. The HTML `pattern` of the time fields: the same rule, so the
 * browser and `parseClockTime` accept exactly the same text. No AM/PM: the facility's clock
 * has 24 hours.
 */
export const CLOCK_TIME_PATTERN = '(?:[01]?[0-9]|2[0-3])(?:[:.h]?[0-5][0-9])?';
const clockTime = new RegExp(`^${CLOCK_TIME_PATTERN}$`);

/** Typed text on the 24-hour clock as "HH:mm" ("9:30" → "09:30", "0930" → "09:30"), or null. */
export function parseClockTime(text: string | null | undefined): string | null {
	const t = (text ?? '').trim();
	if (!clockTime.test(t)) return null;
	const digits = t.replace(/[:.h]/, '');
	// The hour alone ("9", "14"), or the hour followed by two digits of minutes.
	const [h, m] = digits.length <= 2 ? [digits, '00'] : [digits.slice(0, -2), digits.slice(-2)];
	return `${h.padStart(2, '0')}:${m}`;
}

/** "Friday 4 December 2026": a date (YYYY-MM-DD) written out, whatever the browser's language; '' when it is not one. */
export function formatDateLong(date: string | null | undefined): string {
	const dt = DateTime.fromISO(date ?? '', { zone: 'UTC', locale: FACILITY_LOCALE });
	return /^\d{4}-\d{2}-\d{2}$/.test(date ?? '') && dt.isValid
		? dt.toFormat('cccc d LLLL yyyy')
		: '';
}

/**
 * Interprets a date (YYYY-MM-DD) and a time of day as typed (parseClockTime: "09:30", "930")
 * as wall-clock time in `tz`.
 */
export function fromLocal(date: string, typed: string, tz: string): Date | null {
	const time = parseClockTime(typed);
	if (time === null) return null;
	const zone = zoneOf(tz);
	const dt = DateTime.fromISO(`${date}T${time}`, { zone });
	if (!dt.isValid) return null;
	// A wall-clock time skipped by a spring-forward change does not exist: refuse it.
	if (dt.toFormat('yyyy-MM-dd') !== date || dt.toFormat('HH:mm') !== time) return null;
	return firstOccurrence(dt).toJSDate();
}

/**
 * A wall-clock time the clocks show twice (the hour repeated when they go back) read as its
 * first occurrence, as RFC 5545 §3.3.5 reads such a local time. luxon alone picks by the
 * offset in force today, so the same typed time would have meant another hour in summer.
 * Just after the clocks went back the offset is smaller than a few hours before: the same
 * wall time then came that much earlier too.
 */
function firstOccurrence(dt: DateTime): DateTime {
	const ts = dt.toMillis();
	const shiftMin = dt.zone.offset(ts - 6 * 3_600_000) - dt.zone.offset(ts);
	if (shiftMin <= 0) return dt;
	const first = DateTime.fromMillis(ts - shiftMin * 60_000, { zone: dt.zone });
	return first.toFormat('yyyy-MM-dd HH:mm:ss') === dt.toFormat('yyyy-MM-dd HH:mm:ss') ? first : dt;
}

// The helpers below write dates from wallParts (wall-clock.ts), exactly as luxon's toFormat and
// toISO would, and ask luxon itself only where wallParts cannot answer (a zone name such as 'UTC').

let shortNames: { weekdays: string[]; months: string[] } | undefined;

/**
 * Short weekday and month names ("Mon", "Jan") as luxon writes 'ccc' and 'LLL' in
 * FACILITY_LOCALE on this runtime (its en-GB may say "Sept"): asked of luxon once, on first use.
 */
function names() {
	const inLocale = (year: number, month: number, day: number, format: string) =>
		DateTime.utc(year, month, day).setLocale(FACILITY_LOCALE).toFormat(format);
	// 1 January 2024 was a Monday.
	shortNames ??= {
		weekdays: Array.from({ length: 7 }, (_, k) => inLocale(2024, 1, 1 + k, 'ccc')),
		months: Array.from({ length: 12 }, (_, k) => inLocale(2024, k + 1, 15, 'LLL'))
	};
	return shortNames;
}

const pad = (n: number, width = 2) => String(n).padStart(width, '0');
/** 'HH:mm'. */
const hourMinute = (p: WallParts) => `${pad(p.hour)}:${pad(p.minute)}`;
/** toISODate(): wallParts' years have four digits. */
const isoDate = (p: WallParts) => `${p.year}-${pad(p.month)}-${pad(p.day)}`;

/** 'ccc d LLL': "Tue 1 Dec". */
function dayAndMonth(p: WallParts): string {
	const { weekdays, months } = names();
	return `${weekdays[p.weekday - 1]} ${p.day} ${months[p.month - 1]}`;
}

/** The date (YYYY-MM-DD) and time (HH:mm) an instant shows on the facility's clock: fromLocal's inverse. */
export function toLocalParts(at: Date, tz: string): { date: string; time: string } {
	const p = wallParts(at, tz);
	if (p) return { date: isoDate(p), time: hourMinute(p) };
	const l = local(at, tz);
	return { date: l.toISODate()!, time: l.toFormat('HH:mm') };
}

/** ISO 8601 with the facility zone's offset, e.g. 2026-12-01T09:00:00.000+01:00. */
export function isoInZone(at: Date, tz: string): string {
	const p = wallParts(at, tz);
	if (!p) return local(at, tz).toISO()!;
	// As luxon writes an IANA zone's offset: always ±HH:mm, "+00:00" and never "Z".
	const o = Math.abs(p.offsetMinutes);
	const offset = `${p.offsetMinutes < 0 ? '-' : '+'}${pad(Math.trunc(o / 60))}:${pad(o % 60)}`;
	const time = `${hourMinute(p)}:${pad(p.second)}.${pad(p.millisecond, 3)}`;
	return `${isoDate(p)}T${time}${offset}`;
}

/** "Tue 1 Dec, 09:00" in the facility zone. */
export function formatDateTime(at: Date, tz: string): string {
	const p = wallParts(at, tz);
	return p ? `${dayAndMonth(p)}, ${hourMinute(p)}` : local(at, tz).toFormat('ccc d LLL, HH:mm');
}

/** As formatDateTime, with the year when it is not this year's: "Tue 1 Jun 2027, 10:00". */
export function formatWhen(at: Date, tz: string, now = new Date()): string {
	const p = wallParts(at, tz);
	const today = wallParts(now, tz);
	if (p && today) {
		const year = p.year === today.year ? '' : ` ${p.year}`;
		return `${dayAndMonth(p)}${year}, ${hourMinute(p)}`;
	}
	const l = local(at, tz);
	return l.toFormat(l.year === local(now, tz).year ? 'ccc d LLL, HH:mm' : 'ccc d LLL yyyy, HH:mm');
}

export function formatTime(at: Date, tz: string): string {
	const p = wallParts(at, tz);
	return p ? hourMinute(p) : local(at, tz).toFormat('HH:mm');
}

export function formatDate(at: Date, tz: string): string {
	const p = wallParts(at, tz);
	return p ? `${dayAndMonth(p)} ${p.year}` : local(at, tz).toFormat('ccc d LLL yyyy');
}

/** "Tue 1 Dec, 09:00–11:30" (or across days, both dates). */
export function formatRange(start: Date, end: Date, tz: string): string {
	const a = wallParts(start, tz);
	const b = wallParts(end, tz);
	const sameDay = a && b ? onSameDay(start, end, tz) : null;
	if (!a || !b || sameDay === null) return formatRangeByLuxon(start, end, tz);
	const from = `${dayAndMonth(a)}, ${hourMinute(a)}`;
	return sameDay ? `${from}–${hourMinute(b)}` : `${from} – ${dayAndMonth(b)}, ${hourMinute(b)}`;
}

function formatRangeByLuxon(start: Date, end: Date, tz: string): string {
	const a = local(start, tz);
	const b = local(end, tz);
	if (a.hasSame(b, 'day')) return `${a.toFormat('ccc d LLL, HH:mm')}–${b.toFormat('HH:mm')}`;
	return `${a.toFormat('ccc d LLL, HH:mm')} – ${b.toFormat('ccc d LLL, HH:mm')}`;
}

export const minutesBetween = (a: Date, b: Date) => (b.getTime() - a.getTime()) / 60_000;

/** "12 min ago", "3 h ago", "2 d ago": the age of a reading at a glance. */
export function ago(at: Date, now = new Date()): string {
	const minutes = Math.max(0, Math.round((now.getTime() - at.getTime()) / 60_000));
	if (minutes < 1) return 'just now';
	if (minutes < 90) return `${minutes} min ago`;
	const hours = Math.round(minutes / 60);
	if (hours < 36) return `${hours} h ago`;
	return `${Math.round(hours / 24)} d ago`;
}

/** The wall-clock time of an instant in `tz`, as a floating ISO string (no offset). */
export function wallClock(at: Date | string, tz: string): string {
	const dt =
		typeof at === 'string' ? DateTime.fromISO(at, { setZone: true }) : DateTime.fromJSDate(at);
	return dt.setZone(zoneOf(tz)).toFormat("yyyy-MM-dd'T'HH:mm:ss");
}

/** A floating wall-clock string ("2026-12-02T10:00…") read as time in `tz`. */
export function fromWallClock(value: string, tz: string): Date {
	return firstOccurrence(DateTime.fromISO(value.slice(0, 19), { zone: zoneOf(tz) })).toJSDate();
}

/** The zone's offset now, as "+01:00". */
export function currentOffset(tz: string, at = new Date()): string {
	return DateTime.fromJSDate(at).setZone(zoneOf(tz)).toFormat('ZZ');
}

/** Monday 00:00 (facility zone) of the ISO week that holds `at`. */
export function isoWeekStart(at: Date, tz: string): DateTime {
	const dt = local(at, tz);
	if (!dt.isValid) throw new Error(`Unknown time zone “${tz}”.`);
	// luxon's week is the ISO week (Monday first) unless locale weeks are asked for.
	return dt.startOf('week');
}

function isoWeekFrom(start: DateTime): IsoWeek {
	const end = start.plus({ weeks: 1 });
	return {
		key: start.toFormat("kkkk-'W'WW"),
		start: start.toJSDate(),
		end: end.toJSDate(),
		hours: (end.toMillis() - start.toMillis()) / 3_600_000
	};
}

/** The ISO week (facility zone) that holds the instant `at`. */
export function isoWeekOf(at: Date, tz: string): IsoWeek {
	return isoWeekAt(at, tz) ?? isoWeekFrom(isoWeekStart(at, tz));
}

/** The ISO weeks (facility zone) that [from, to) touches, in order, whole; none when empty. */
export function isoWeeksCovering(from: Date, to: Date, tz: string): IsoWeek[] {
	return isoWeeksBetween(from, to, tz) ?? isoWeeksByLuxon(from, to, tz);
}

function isoWeeksByLuxon(from: Date, to: Date, tz: string): IsoWeek[] {
	const weeks: IsoWeek[] = [];
	for (let start = isoWeekStart(from, tz); start.toMillis() < to.getTime();) {
		const week = isoWeekFrom(start);
		weeks.push(week);
		start = local(week.end, tz);
	}
	return weeks;
}

/** Milliseconds of [start, end) inside [from, to), by plain arithmetic (it runs per booking). */
export function msWithin(start: Date, end: Date, from: Date, to: Date): number {
	const a = Math.max(start.getTime(), from.getTime());
	const b = Math.min(end.getTime(), to.getTime());
	return b > a ? b - a : 0;
}

/** [start, end) cut to [from, to), or null when nothing of it is inside. */
export function clip(
	start: Date,
	end: Date,
	from: Date,
	to: Date
): { start: Date; end: Date } | null {
	const a = Math.max(start.getTime(), from.getTime());
	const b = Math.min(end.getTime(), to.getTime());
	return b > a ? { start: new Date(a), end: new Date(b) } : null;
}

/** Minutes in a week: the most any weekly limit can be. */
export const MINUTES_PER_WEEK = 7 * 24 * 60;

/** Hours as entered (7.5) in whole minutes (450), to the nearest minute. */
export const minutesFromHours = (hours: number) => Math.round(hours * 60);

/**
 * Minutes as hours for a field that takes hours: 720 → "12", 450 → "7.5", 100 → "1.67"
 * (two decimals, which minutesFromHours reads back to the same minute).
 */
export const hoursFromMinutes = (minutes: number) => String(Math.round((minutes / 60) * 100) / 100);

/**
 * A length of time in words, to the minute: "45 min", "3 h", "2 h 30 min". With `days`, from
 * 48 h on in days and hours, minutes dropped ("2 d 15 h"): for lead times, where a minute
 * does not matter.
 */
export function formatDuration(minutes: number, { days = false } = {}): string {
	const m = Math.round(minutes);
	if (days && m >= 48 * 60) {
		const d = Math.floor(m / 1440);
		const h = Math.floor((m % 1440) / 60);
		return h ? `${d} d ${h} h` : `${d} d`;
	}
	if (m < 60) return `${m} min`;
	const h = Math.floor(m / 60);
	return m % 60 ? `${h} h ${m % 60} min` : `${h} h`;
}
