// The facility's wall clock by plain arithmetic on the zone's remembered offset (zone.ts), for
// the time helpers every booking request runs: a luxon DateTime per date, its locale and
// formatting through Intl cost about a tenth of a request's CPU.
//
// Each function gives exactly what luxon 3.7 gives, or null where that is not certain: a zone
// name that is not a remembered IANA zone ('UTC' prints "Z", an unknown name is invalid), an
// invalid date, a year outside 1000–9999 (luxon writes those with more or fewer digits), or an
// offset in fractions of a minute (local mean time, before the 1970s), which luxon rounds on
// the way. The caller then asks luxon itself.
import type { Zone } from 'luxon';
import { rememberedZoneOf } from './zone';

const MINUTE = 60_000;
const HOUR = 3_600_000;
const DAY = 86_400_000;

/** An instant as the facility's clock shows it. */
export type WallParts = {
	year: number;
	/** 1 (January) to 12. */
	month: number;
	day: number;
	hour: number;
	minute: number;
	second: number;
	millisecond: number;
	/** 1 (Monday) to 7 (Sunday), as ISO and luxon count. */
	weekday: number;
	/** The zone's offset from UTC at that instant, in minutes (+60 in Berlin in winter). */
	offsetMinutes: number;
};

/** An ISO week (Monday 00:00 to the next Monday 00:00) on the facility's wall clock. */
export type IsoWeek = {
	/** "2026-W13": the ISO week year, which differs from the calendar year around New Year. */
	key: string;
	/** Monday 00:00 in the zone, as an instant. */
	start: Date;
	/** The next Monday 00:00. */
	end: Date;
	/** Real hours in the week: 168, or 167 / 169 in a week with a daylight-saving change. */
	hours: number;
};

/** The zone's offset at `ts` in whole minutes, or null for a fraction of one. */
function offsetAt(zone: Zone, ts: number): number | null {
	const offset = zone.offset(ts);
	return Number.isInteger(offset) ? offset : null;
}

/** The wall clock at `ts`, as luxon's DateTime holds it (its tsToObj). */
function partsAt(ts: number, zone: Zone): WallParts | null {
	if (Number.isNaN(ts)) return null;
	const offsetMinutes = offsetAt(zone, ts);
	if (offsetMinutes === null) return null;
	const d = new Date(ts + offsetMinutes * MINUTE);
	const year = d.getUTCFullYear();
	if (year < 1000 || year > 9999) return null;
	return {
		year,
		month: d.getUTCMonth() + 1,
		day: d.getUTCDate(),
		hour: d.getUTCHours(),
		minute: d.getUTCMinutes(),
		second: d.getUTCSeconds(),
		millisecond: d.getUTCMilliseconds(),
		weekday: d.getUTCDay() || 7,
		offsetMinutes
	};
}

/** The reading of `parts` (the clock at `ts`) as milliseconds on a clock at UTC+0 (luxon's objToLocalTS). */
const wallMs = (ts: number, parts: WallParts) => ts + parts.offsetMinutes * MINUTE;

/** 00:00 of the date `days` after that of `parts`, as wallMs. */
const midnightMs = (parts: WallParts, days = 0) =>
	Date.UTC(parts.year, parts.month - 1, parts.day + days);

/**
 * The instant luxon gives a wall-clock reading (`localMs`, as wallMs) starting from the offset
 * `guess`: its fixOffset, step for step. The guess decides between the two instants of a reading
 * the clock shows twice (autumn) and how one it skips (spring) is moved forward. luxon's set,
 * startOf and plus guess with the offset of the DateTime they start from, as the callers here
 * do; only its parsing (fromISO, fromObject) guesses with the offset at the current time.
 */
function resolve(localMs: number, guess: number, zone: Zone): number | null {
	const guessed = localMs - guess * MINUTE;
	const second = offsetAt(zone, guessed);
	if (second === null) return null;
	if (second === guess) return guessed;
	const moved = guessed - (second - guess) * MINUTE;
	const third = offsetAt(zone, moved);
	if (third === null) return null;
	if (third === second) return moved;
	// A reading the clock skips: luxon keeps it, read with the offset from before the change.
	return localMs - Math.min(second, third) * MINUTE;
}

/** What the facility's clock shows at `at`; null where luxon must answer (see the top of this file). */
export function wallParts(at: Date, tz: string): WallParts | null {
	const zone = rememberedZoneOf(tz);
	return zone && partsAt(at.getTime(), zone);
}

/**
 * Whether `other` falls within the day of `at`, as luxon's `hasSame(other, 'day')` decides it:
 * from `at`'s startOf('day') to plus({ days: 1 }).startOf('day') less 1 ms, each midnight
 * resolved from the offset luxon starts from. That differs from "the same date" where a
 * midnight comes twice (Havana's autumn change, 01:00 back to 00:00): from late on the day
 * before, luxon counts the first of the two midnight hours in.
 */
export function onSameDay(at: Date, other: Date, tz: string): boolean | null {
	const zone = rememberedZoneOf(tz);
	const ts = at.getTime();
	const parts = zone && partsAt(ts, zone);
	if (!zone || !parts) return null;
	const start = resolve(midnightMs(parts), parts.offsetMinutes, zone);
	const dayLater = resolve(wallMs(ts, parts) + DAY, parts.offsetMinutes, zone);
	const later = dayLater === null ? null : partsAt(dayLater, zone);
	const next = later && resolve(midnightMs(later), later.offsetMinutes, zone);
	// luxon's minus(1) from `next` is next - 1 when the offset there is whole minutes.
	if (start === null || next === null || offsetAt(zone, next) === null) return null;
	const t = other.getTime();
	return start <= t && t <= next - 1;
}

/** ISO week year and number of the date in `parts` ("kkkk-'W'WW"): the year of that week's Thursday. */
function isoWeekKey(parts: WallParts): string {
	const thursday = new Date(midnightMs(parts, 4 - parts.weekday));
	const year = thursday.getUTCFullYear();
	const week = Math.floor((thursday.getTime() - Date.UTC(year, 0, 1)) / (7 * DAY)) + 1;
	return `${String(year).padStart(4, '0')}-W${String(week).padStart(2, '0')}`;
}

/** luxon's startOf('week') from `ts`: Monday 00:00 of its date's ISO week, resolved from its offset. */
function weekStartFrom(ts: number, zone: Zone): number | null {
	const parts = partsAt(ts, zone);
	return parts && resolve(midnightMs(parts, 1 - parts.weekday), parts.offsetMinutes, zone);
}

/** The week that starts at `start`, ending at luxon's start.plus({ weeks: 1 }). */
function weekFrom(start: number, zone: Zone): IsoWeek | null {
	const parts = partsAt(start, zone);
	const end = parts && resolve(wallMs(start, parts) + 7 * DAY, parts.offsetMinutes, zone);
	if (!parts || end === null) return null;
	return {
		key: isoWeekKey(parts),
		start: new Date(start),
		end: new Date(end),
		hours: (end - start) / HOUR
	};
}

/** The ISO week (facility zone) that holds `at`; null where luxon must answer. */
export function isoWeekAt(at: Date, tz: string): IsoWeek | null {
	const zone = rememberedZoneOf(tz);
	const start = zone && weekStartFrom(at.getTime(), zone);
	return zone && start !== null ? weekFrom(start, zone) : null;
}

/** The ISO weeks (facility zone) that [from, to) touches, each starting where the last ended. */
export function isoWeeksBetween(from: Date, to: Date, tz: string): IsoWeek[] | null {
	const zone = rememberedZoneOf(tz);
	let start = zone && weekStartFrom(from.getTime(), zone);
	if (!zone || start === null) return null;
	const weeks: IsoWeek[] = [];
	while (start < to.getTime()) {
		const week = weekFrom(start, zone);
		if (!week) return null;
		weeks.push(week);
		start = week.end.getTime();
	}
	return weeks;
}
