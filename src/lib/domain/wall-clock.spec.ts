import { DateTime } from 'luxon';
import { describe, expect, it } from 'vitest';
import {
	formatDate,
	formatDateTime,
	formatRange,
	formatTime,
	formatWhen,
	isoInZone,
	isoWeekOf,
	isoWeeksCovering,
	toLocalParts,
	type IsoWeek
} from './time';
import { wallParts } from './wall-clock';
import { zoneOf } from './zone';

const MINUTE = 60_000;
const HOUR = 3_600_000;
const DAY = 86_400_000;
const NOW = new Date('2026-07-01T12:00:00Z');

/**
 * The helpers as they were before wall-clock.ts, on luxon DateTimes: the reference. (The zone
 * is the remembered one; zone.spec checks that against the plain zone name.)
 */
const luxon = {
	local: (at: Date, tz: string) => DateTime.fromJSDate(at, { zone: zoneOf(tz) }).setLocale('en-GB'),
	toLocalParts(at: Date, tz: string) {
		const l = luxon.local(at, tz);
		return { date: l.toISODate()!, time: l.toFormat('HH:mm') };
	},
	isoInZone: (at: Date, tz: string) => luxon.local(at, tz).toISO()!,
	formatDateTime: (at: Date, tz: string) => luxon.local(at, tz).toFormat('ccc d LLL, HH:mm'),
	formatWhen(at: Date, tz: string, now: Date) {
		const l = luxon.local(at, tz);
		return l.toFormat(
			l.year === luxon.local(now, tz).year ? 'ccc d LLL, HH:mm' : 'ccc d LLL yyyy, HH:mm'
		);
	},
	formatTime: (at: Date, tz: string) => luxon.local(at, tz).toFormat('HH:mm'),
	formatDate: (at: Date, tz: string) => luxon.local(at, tz).toFormat('ccc d LLL yyyy'),
	formatRange(start: Date, end: Date, tz: string) {
		const a = luxon.local(start, tz);
		const b = luxon.local(end, tz);
		if (a.hasSame(b, 'day')) return `${a.toFormat('ccc d LLL, HH:mm')}–${b.toFormat('HH:mm')}`;
		return `${a.toFormat('ccc d LLL, HH:mm')} – ${b.toFormat('ccc d LLL, HH:mm')}`;
	},
	isoWeekFrom(start: DateTime): IsoWeek {
		const end = start.plus({ weeks: 1 });
		return {
			key: start.toFormat("kkkk-'W'WW"),
			start: start.toJSDate(),
			end: end.toJSDate(),
			hours: (end.toMillis() - start.toMillis()) / 3_600_000
		};
	},
	isoWeekStart(at: Date, tz: string): DateTime {
		const dt = luxon.local(at, tz);
		if (!dt.isValid) throw new Error(`Unknown time zone “${tz}”.`);
		return dt.startOf('week');
	},
	isoWeekOf: (at: Date, tz: string) => luxon.isoWeekFrom(luxon.isoWeekStart(at, tz)),
	isoWeeksCovering(from: Date, to: Date, tz: string) {
		const weeks: IsoWeek[] = [];
		for (let start = luxon.isoWeekStart(from, tz); start.toMillis() < to.getTime();) {
			const week = luxon.isoWeekFrom(start);
			weeks.push(week);
			start = luxon.local(week.end, tz);
		}
		return weeks;
	}
};

/** What the helpers say of `at` in `tz`, one set or the other; the ISO week unless `weekless`. */
const said = (helpers: typeof luxon, at: Date, tz: string, weekless = false) => ({
	iso: helpers.isoInZone(at, tz),
	parts: helpers.toLocalParts(at, tz),
	dateTime: helpers.formatDateTime(at, tz),
	date: helpers.formatDate(at, tz),
	time: helpers.formatTime(at, tz),
	when: helpers.formatWhen(at, tz, NOW),
	week: weekless ? null : helpers.isoWeekOf(at, tz)
});
const rewritten = {
	...luxon,
	toLocalParts,
	isoInZone,
	formatDateTime,
	formatWhen,
	formatTime,
	formatDate,
	formatRange,
	isoWeekOf,
	isoWeeksCovering
};

/** luxon's reading of the clock, in wallParts' shape. */
const luxonParts = (at: Date, tz: string) => {
	const l = luxon.local(at, tz);
	const { year, month, day, hour, minute, second, millisecond, weekday, offset } = l;
	return { year, month, day, hour, minute, second, millisecond, weekday, offsetMinutes: offset };
};

/** from, from + step, … up to to, excluded. */
const range = (from: number, to: number, step: number) =>
	Array.from({ length: Math.ceil((to - from) / step) }, (_, i) => from + i * step);

/** The instants in [from, to) where the zone's offset changes, to the minute (scanned every 6 h). */
const changesBetween = (tz: string, from: number, to: number) => {
	const zone = zoneOf(tz);
	return range(from, to, 6 * HOUR).flatMap((t) => {
		if (zone.offset(t) === zone.offset(t + 6 * HOUR)) return [];
		let [lo, hi] = [t, t + 6 * HOUR];
		while (hi - lo > MINUTE) {
			const mid = lo + Math.floor((hi - lo) / 2 / MINUTE) * MINUTE;
			if (zone.offset(mid) === zone.offset(lo)) lo = mid;
			else hi = mid;
		}
		return [hi];
	});
};

/**
 * Every sample where the rewritten helpers and luxon disagree, as [what, got, want]; the
 * spec expects none. Gathered so that one failure shows the first few, not one of thousands.
 */
const mismatches = (samples: [string, () => unknown, () => unknown][]) =>
	samples.flatMap(([what, got, want]) => {
		const [g, w] = [got(), want()];
		return JSON.stringify(g) === JSON.stringify(w) ? [] : [[what, g, w]];
	});

/** All single-instant helpers and wallParts at each instant. */
const instantSamples = (tz: string, instants: number[]) =>
	instants.flatMap((ts): [string, () => unknown, () => unknown][] => {
		const at = new Date(ts);
		const what = `${tz} ${at.toISOString()}`;
		return [
			[what, () => said(rewritten, at, tz), () => said(luxon, at, tz)],
			[what, () => wallParts(at, tz), () => luxonParts(at, tz)]
		];
	});

/** Ranges from each instant: backwards, empty, within the hour, across midnight and the change. */
const RANGE_LENGTHS = [-90 * MINUTE, 0, 100 * MINUTE, 23 * HOUR, 25 * HOUR];
const rangeSamples = (tz: string, starts: number[]) =>
	starts.flatMap((ts) =>
		RANGE_LENGTHS.map((length): [string, () => unknown, () => unknown] => {
			const [start, end] = [new Date(ts), new Date(ts + length)];
			const what = `${tz} ${start.toISOString()} + ${length / MINUTE} min`;
			return [what, () => formatRange(start, end, tz), () => luxon.formatRange(start, end, tz)];
		})
	);

/** Spans of weeks from each instant: empty, a millisecond, across one and two week ends. */
const SPAN_LENGTHS = [-HOUR, 1, 3 * DAY, 16 * DAY];
const weekSamples = (tz: string, froms: number[]) =>
	froms.flatMap((ts) =>
		SPAN_LENGTHS.map((length): [string, () => unknown, () => unknown] => {
			const [from, to] = [new Date(ts), new Date(ts + length)];
			const what = `${tz} ${from.toISOString()} + ${length / MINUTE} min`;
			return [
				what,
				() => isoWeeksCovering(from, to, tz),
				() => luxon.isoWeeksCovering(from, to, tz)
			];
		})
	);

/**
 * Samples near a change: every 10 minutes in the two hours either side and at its edge, more
 * coarsely across the day and a half either side (midnights, ranges across both) and the week
 * either side (week starts and ends). The odd steps land on ever other minutes of the hour.
 */
const aroundChange = (tz: string, change: number) => {
	const near = range(change - 2 * HOUR, change + 2 * HOUR, 10 * MINUTE);
	const edge = [change - 1, change, change + MINUTE - 1];
	const days = range(change - 30 * HOUR, change + 30 * HOUR, 53 * MINUTE);
	const weeks = range(change - 8 * DAY, change + 8 * DAY, 9 * HOUR + 7 * MINUTE);
	return [
		...instantSamples(tz, [...near, ...edge, ...days, ...weeks]),
		...rangeSamples(tz, range(change - 30 * HOUR, change + 30 * HOUR, 71 * MINUTE)),
		...weekSamples(tz, range(change - 8 * DAY, change + 8 * DAY, 13 * HOUR + 7 * MINUTE))
	];
};

// The zones of zone.spec, and some whose clocks change at midnight, where the instant luxon
// picks for an ambiguous or skipped midnight depends on the offset it starts from: Havana
// (01:00 back to 00:00 on a Sunday), Santiago (spring: Sunday 00:00 skipped), Cairo, Beirut.
const ZONES = [
	'Europe/Berlin',
	'America/New_York',
	'Australia/Sydney',
	'Australia/Lord_Howe',
	'Asia/Kolkata',
	'America/St_Johns',
	'Europe/London',
	'Pacific/Chatham',
	'America/Havana',
	'America/Santiago',
	'Africa/Cairo',
	'Asia/Beirut',
	'Etc/UTC'
];
const from2026 = Date.UTC(2026, 0, 1);
const to2028 = Date.UTC(2028, 0, 1);
const changes = ZONES.flatMap((tz) =>
	changesBetween(tz, from2026, to2028).map((change) => ({
		tz,
		change,
		label: new Date(change).toISOString()
	}))
);

describe('wall-clock helpers agree with luxon, to the character', () => {
	it('finds the changes of 2026 and 2027 it samples around', () => {
		const zones = ZONES.map((tz) => changes.filter((c) => c.tz === tz).length);
		// Four a year in each zone with daylight-saving time; none in Kolkata and Etc/UTC.
		expect(zones).toEqual([4, 4, 4, 4, 0, 4, 4, 4, 4, 4, 4, 4, 0]);
	});

	it.each(changes)('$tz around the change at $label', ({ tz, change }) => {
		expect(mismatches(aroundChange(tz, change)).slice(0, 5)).toEqual([]);
	});

	it.each(ZONES)('%s across New Year 2027 (ISO week 53 of 2026) and 29 February 2028', (tz) => {
		const newYear = range(Date.UTC(2026, 11, 26), Date.UTC(2027, 0, 6), 3 * HOUR + 7 * MINUTE);
		const leapDay = range(Date.UTC(2028, 1, 27), Date.UTC(2028, 2, 3), 3 * HOUR + 7 * MINUTE);
		const samples = [
			...instantSamples(tz, [...newYear, ...leapDay]),
			...rangeSamples(tz, range(Date.UTC(2026, 11, 30), Date.UTC(2027, 0, 2), 5 * HOUR)),
			...weekSamples(tz, range(Date.UTC(2026, 11, 20), Date.UTC(2027, 0, 10), 23 * HOUR))
		];
		expect(mismatches(samples).slice(0, 5)).toEqual([]);
		expect(isoWeekOf(new Date('2027-01-01T12:00:00Z'), tz).key).toBe('2026-W53');
		expect(formatDate(new Date('2028-02-29T12:00:00Z'), tz)).toBe(
			luxon.formatDate(new Date('2028-02-29T12:00:00Z'), tz)
		);
	});

	it('names every day and week of 2026–2028 as luxon does ("Sept" where its en-GB says so)', () => {
		const tz = 'Europe/Berlin';
		const days = range(Date.UTC(2026, 0, 1, 12), Date.UTC(2029, 0, 1), DAY).map((t) => new Date(t));
		expect(days.map((at) => [formatDate(at, tz), isoWeekOf(at, tz).key])).toEqual(
			days.map((at) => [luxon.formatDate(at, tz), luxon.isoWeekOf(at, tz).key])
		);
	});

	it('follows luxon where a midnight comes twice or not at all', () => {
		// Havana, 1 November 2026: 01:00 goes back to 00:00. From 01:30 the day before, luxon's
		// day ends at the second midnight, so the first 00:30 is still "the same day".
		const tz = 'America/Havana';
		const saturday = new Date('2026-10-31T05:30:00Z');
		const firstHalfPast = new Date('2026-11-01T04:30:00Z');
		expect(formatRange(saturday, firstHalfPast, tz)).toBe('Sat 31 Oct, 01:30–00:30');
		expect(formatRange(saturday, firstHalfPast, tz)).toBe(
			luxon.formatRange(saturday, firstHalfPast, tz)
		);
		// Earlier zones whose Monday 00:00 came twice (Jerusalem 2002, Vostok 2023) or was
		// skipped (Tehran 2021, Casablanca 2009): luxon's week starts where its guess lands.
		const mondays: [string, string][] = [
			['Asia/Jerusalem', '2002-10-07'],
			['Antarctica/Vostok', '2023-12-18'],
			['Asia/Tehran', '2021-03-22'],
			['Africa/Casablanca', '2009-06-01']
		];
		for (const [zone, monday] of mondays) {
			const start = DateTime.fromISO(monday, { zone: 'UTC' }).toMillis();
			const samples = [
				...instantSamples(zone, range(start - DAY, start + 2 * DAY, 37 * MINUTE)),
				...rangeSamples(zone, range(start - DAY, start + DAY, 2 * HOUR)),
				...weekSamples(zone, range(start - 8 * DAY, start + 2 * DAY, 5 * HOUR))
			];
			expect(mismatches(samples).slice(0, 5), zone).toEqual([]);
		}
		// Jerusalem: Monday 00:30 at +03:00 is in a week of 169 hours, 00:30 at +02:00 in one of 168.
		const jerusalem = (iso: string) => isoWeekOf(new Date(iso), 'Asia/Jerusalem');
		expect(jerusalem('2002-10-06T21:30:00Z').hours).toBe(169);
		expect(jerusalem('2002-10-06T22:30:00Z').hours).toBe(168);
	});

	it('leaves other zone names to luxon: UTC ("Z"), fixed offsets, unknown names', () => {
		const at = new Date('2026-03-29T01:30:00Z');
		for (const tz of ['UTC', 'utc', 'UTC+3']) {
			expect(wallParts(at, tz), tz).toBeNull();
			expect(said(rewritten, at, tz), tz).toEqual(said(luxon, at, tz));
			const end = new Date(at.getTime() + 25 * HOUR);
			expect(formatRange(at, end, tz)).toBe(luxon.formatRange(at, end, tz));
			expect(isoWeeksCovering(at, end, tz)).toEqual(luxon.isoWeeksCovering(at, end, tz));
		}
		expect(isoInZone(at, 'UTC')).toBe('2026-03-29T01:30:00.000Z');
		expect(isoInZone(at, 'Etc/UTC')).toBe('2026-03-29T01:30:00.000+00:00');
		expect(isoInZone(at, 'Europe/London')).toBe('2026-03-29T02:30:00.000+01:00');
		expect(isoInZone(new Date('2026-12-01T09:00:00Z'), 'Europe/London')).toBe(
			'2026-12-01T09:00:00.000+00:00'
		);
		expect(wallParts(at, 'Mars/Olympus_Mons')).toBeNull();
		expect(formatDateTime(at, 'Mars/Olympus_Mons')).toBe('Invalid DateTime');
		expect(() => isoWeekOf(at, 'Mars/Olympus_Mons')).toThrow('Unknown time zone');
	});

	it('leaves to luxon invalid dates, years not of four digits, offsets in fractions of a minute', () => {
		const tz = 'Europe/Berlin';
		// Berlin kept local mean time, +00:53:28, until 1893.
		const odd = ['0999-06-01T12:00:00Z', '+010000-06-01T12:00:00Z', '1890-06-01T12:00:00Z'];
		for (const at of odd.map((iso) => new Date(iso))) {
			expect(wallParts(at, tz), at.toISOString()).toBeNull();
			expect(said(rewritten, at, tz)).toEqual(said(luxon, at, tz));
			const end = new Date(at.getTime() + 25 * HOUR);
			expect(formatRange(at, end, tz)).toBe(luxon.formatRange(at, end, tz));
			expect(isoWeeksCovering(at, end, tz)).toEqual(luxon.isoWeeksCovering(at, end, tz));
		}
		const invalid = new Date(NaN);
		expect(wallParts(invalid, tz)).toBeNull();
		expect(said(rewritten, invalid, tz, true)).toEqual(said(luxon, invalid, tz, true));
		expect(() => isoWeekOf(invalid, tz)).toThrow('Unknown time zone');
	});
});
