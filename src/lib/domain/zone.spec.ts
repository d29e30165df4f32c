import { DateTime, FixedOffsetZone, IANAZone } from 'luxon';
import { describe, expect, it, vi } from 'vitest';
import {
	currentOffset,
	formatDateTime,
	formatRange,
	fromLocal,
	fromWallClock,
	isoInZone,
	isoWeekOf,
	isoWeeksCovering,
	local,
	toLocalParts,
	wallClock
} from './time';
import { zoneOf } from './zone';

const MINUTE = 60_000;
const HOUR = 3_600_000;
const DAY = 86_400_000;
const at = (iso: string) => new Date(iso);

/** Plain luxon, the zone given as a string: what the helpers did before zoneOf. */
const plain = (when: Date, tz: string) =>
	DateTime.fromJSDate(when, { zone: tz }).setLocale('en-GB');
const plainOffset = (ts: number, tz: string) => IANAZone.create(tz).offset(ts);

// The days the clocks change in 2026 and 2027, from each zone's published rule:
// - EU (Berlin, London): last Sunday of March and of October, at 01:00 UTC (Directive 2000/84/EC).
// - US (New York) and Newfoundland (St John's): second Sunday of March and first Sunday of
//   November, at 02:00 local time (US Energy Policy Act of 2005, which Canada's provinces follow).
// - New South Wales (Sydney) and Lord Howe Island: first Sunday of October and of April, at 02:00
//   local standard time (NSW Standard Time Act 1987, dates as amended in 2007); Lord Howe moves
//   by 30 minutes, at 02:00 local time both ways.
// - New Zealand, Chatham Islands: last Sunday of September and first Sunday of April (New Zealand
//   Daylight Time Order 2007), at 02:45 local standard time (02:00 in Wellington).
// - India (Kolkata) keeps +05:30 all year; it is swept over the EU days.
const EU = ['2026-03-29', '2026-10-25', '2027-03-28', '2027-10-31'];
const US = ['2026-03-08', '2026-11-01', '2027-03-14', '2027-11-07'];
const NSW = ['2026-04-05', '2026-10-04', '2027-04-04', '2027-10-03'];
const CHANGE_DAYS: Record<string, string[]> = {
	'Europe/Berlin': EU,
	'Europe/London': EU,
	'America/New_York': US,
	'America/St_Johns': US,
	'Australia/Sydney': NSW,
	'Australia/Lord_Howe': NSW,
	'Pacific/Chatham': ['2026-04-05', '2026-09-27', '2027-04-04', '2027-09-26'],
	'Asia/Kolkata': EU
};
const SHIFT_MINUTES: Record<string, number> = { 'Australia/Lord_Howe': 30, 'Asia/Kolkata': 0 };
const cases = Object.entries(CHANGE_DAYS).flatMap(([tz, days]) => days.map((day) => ({ tz, day })));

/** Local midnight of a date in the zone, as an instant (plain luxon). */
const midnight = (day: string, tz: string) => DateTime.fromISO(day, { zone: tz }).toMillis();
/** How far the clock moves forward that day, in minutes: > 0 in spring, < 0 in autumn. */
const shiftOn = (day: string, tz: string) => {
	const start = midnight(day, tz);
	return plainOffset(start + DAY, tz) - plainOffset(start, tz);
};

/** from, from + step, … up to to, excluded. */
const range = (from: number, to: number, step: number) =>
	Array.from({ length: Math.ceil((to - from) / step) }, (_, i) => from + i * step);

/**
 * The first instant of the new offset on `day`, to the minute, found by halving the day (every
 * change here is on a whole minute); local noon for a zone that keeps its offset.
 */
const changeAt = (day: string, tz: string) => {
	const start = midnight(day, tz);
	const before = plainOffset(start, tz);
	if (plainOffset(start + DAY, tz) === before) return start + DAY / 2;
	let [lo, hi] = [0, 24 * 60];
	while (hi - lo > 1) {
		const mid = Math.floor((lo + hi) / 2);
		if (plainOffset(start + mid * MINUTE, tz) === before) lo = mid;
		else hi = mid;
	}
	return start + hi * MINUTE;
};

describe('the dates the clocks change (published rules, as the IANA data has them)', () => {
	it.each(cases)('$tz changes on $day (and on no other day that week)', ({ tz, day }) => {
		const shift = SHIFT_MINUTES[tz] ?? 60;
		expect(Math.abs(shiftOn(day, tz))).toBe(shift);
		const calm = [-3, -2, -1, 1, 2, 3].map((d) => DateTime.fromISO(day).plus({ days: d }));
		for (const other of calm) expect(shiftOn(other.toISODate()!, tz), other.toISODate()!).toBe(0);
	});

	it('gives the wall clock and offset of known instants', () => {
		const known: [string, string, string][] = [
			// EU: 01:00 UTC, both ways.
			['Europe/Berlin', '2026-03-29T00:59:59.999Z', '2026-03-29T01:59:59.999+01:00'],
			['Europe/Berlin', '2026-03-29T01:00:00.000Z', '2026-03-29T03:00:00.000+02:00'],
			['Europe/Berlin', '2026-10-25T00:59:00.000Z', '2026-10-25T02:59:00.000+02:00'],
			['Europe/Berlin', '2026-10-25T01:00:00.000Z', '2026-10-25T02:00:00.000+01:00'],
			['Europe/London', '2026-03-29T01:00:00.000Z', '2026-03-29T02:00:00.000+01:00'],
			['Europe/London', '2027-10-31T01:00:00.000Z', '2027-10-31T01:00:00.000+00:00'],
			// US: 02:00 local.
			['America/New_York', '2026-03-08T07:00:00.000Z', '2026-03-08T03:00:00.000-04:00'],
			['America/New_York', '2026-11-01T05:59:00.000Z', '2026-11-01T01:59:00.000-04:00'],
			['America/New_York', '2026-11-01T06:00:00.000Z', '2026-11-01T01:00:00.000-05:00'],
			['America/St_Johns', '2026-03-08T05:30:00.000Z', '2026-03-08T03:00:00.000-02:30'],
			['America/St_Johns', '2026-11-01T04:30:00.000Z', '2026-11-01T01:00:00.000-03:30'],
			// NSW: 02:00 standard time (03:00 summer time) local.
			['Australia/Sydney', '2026-04-04T15:59:00.000Z', '2026-04-05T02:59:00.000+11:00'],
			['Australia/Sydney', '2026-04-04T16:00:00.000Z', '2026-04-05T02:00:00.000+10:00'],
			['Australia/Sydney', '2026-10-03T16:00:00.000Z', '2026-10-04T03:00:00.000+11:00'],
			['Australia/Lord_Howe', '2026-04-04T15:00:00.000Z', '2026-04-05T01:30:00.000+10:30'],
			['Australia/Lord_Howe', '2026-10-03T15:30:00.000Z', '2026-10-04T02:30:00.000+11:00'],
			// Chatham Islands: 02:45 standard time (03:45 summer time) local.
			['Pacific/Chatham', '2026-04-04T14:00:00.000Z', '2026-04-05T02:45:00.000+12:45'],
			['Pacific/Chatham', '2026-09-26T13:59:00.000Z', '2026-09-27T02:44:00.000+12:45'],
			['Pacific/Chatham', '2026-09-26T14:00:00.000Z', '2026-09-27T03:45:00.000+13:45'],
			['Asia/Kolkata', '2026-03-29T01:00:00.000Z', '2026-03-29T06:30:00.000+05:30']
		];
		for (const [tz, utc, wall] of known) expect(isoInZone(at(utc), tz), `${tz} ${utc}`).toBe(wall);
	});
});

describe('the remembered zone agrees with plain luxon', () => {
	// Every step in the three hours either side of the change (to the minute for offsets), and
	// a coarser one across the week around it. Mismatches are gathered and compared in one go.
	const around = (day: string, tz: string, step: number, weekStep: number) => {
		const change = changeAt(day, tz);
		const near = range(change - 3 * HOUR, change + 3 * HOUR, step);
		return [...near, ...range(midnight(day, tz) - 3 * DAY, midnight(day, tz) + 4 * DAY, weekStep)];
	};

	it.each(cases)('$tz: the offset at every minute around the change on $day', ({ tz, day }) => {
		const zone = zoneOf(tz);
		const change = changeAt(day, tz);
		const start = midnight(day, tz) - 3 * DAY;
		// Both ends of every hour of the week (the memo's buckets), every minute near the change,
		// and the last and first millisecond of the change.
		const hours = range(start, start + 7 * DAY, HOUR).flatMap((ts) => [ts - 1, ts]);
		const minutes = range(change - 3 * HOUR, change + 3 * HOUR, MINUTE);
		const instants = [...hours, ...minutes, change - 1, change];
		const got = instants.map((ts) => `${new Date(ts).toISOString()} ${zone.offset(ts)}`);
		const want = instants.map((ts) => `${new Date(ts).toISOString()} ${plainOffset(ts, tz)}`);
		expect(got).toEqual(want);
	});

	it.each(cases)('$tz: local times and ISO strings every 15 minutes around $day', ({ tz, day }) => {
		const instants = around(day, tz, 15 * MINUTE, 8 * HOUR).map((ts) => new Date(ts));
		const got = instants.map((when) => [
			local(when, tz).toISO(),
			isoInZone(when, tz),
			toLocalParts(when, tz),
			wallClock(when, tz),
			currentOffset(tz, when)
		]);
		const want = instants.map((when) => {
			const expected = plain(when, tz);
			return [
				expected.toISO(),
				expected.toISO(),
				{ date: expected.toISODate(), time: expected.toFormat('HH:mm') },
				expected.toFormat("yyyy-MM-dd'T'HH:mm:ss"),
				expected.toFormat('ZZ')
			];
		});
		expect(got).toEqual(want);
	});

	it.each(cases)('$tz: dates and ranges in words every 30 minutes around $day', ({ tz, day }) => {
		// 100-minute ranges: some across the change, some across midnight.
		const starts = around(day, tz, 30 * MINUTE, 13 * HOUR).map((ts) => new Date(ts));
		const ends = starts.map((start) => new Date(start.getTime() + 100 * MINUTE));
		const got = starts.map((start, i) => [
			formatRange(start, ends[i], tz),
			formatDateTime(start, tz)
		]);
		const want = starts.map((start, i) => {
			const [a, b] = [plain(start, tz), plain(ends[i], tz)];
			const from = a.toFormat('ccc d LLL, HH:mm');
			return [
				a.hasSame(b, 'day')
					? `${from}–${b.toFormat('HH:mm')}`
					: `${from} – ${b.toFormat('ccc d LLL, HH:mm')}`,
				from
			];
		});
		expect(got).toEqual(want);
	});

	it.each(cases)(
		'$tz: every quarter hour of $day reads back, but the skipped ones',
		({ tz, day }) => {
			const times = range(0, 24 * 60, 15).map(
				(m) => `${String(Math.floor(m / 60)).padStart(2, '0')}:${String(m % 60).padStart(2, '0')}`
			);
			const read = times.map((time) => fromLocal(day, time, tz));
			// A time the clock jumps over is refused; any other reads back to itself (in the autumn's
			// repeated hour, as the first of its two instants, RFC 5545 §3.3.5).
			const got = times.map((time, i) => [time, read[i]?.getTime() ?? null]);
			const want = times.map((time) => {
				const expected = DateTime.fromISO(`${day}T${time}`, { zone: tz });
				if (expected.toFormat('HH:mm') !== time) return [time, null];
				const shows = (ms: number) =>
					DateTime.fromMillis(ms, { zone: tz }).toFormat('yyyy-MM-dd HH:mm') === `${day} ${time}`;
				const twice = [30, 60].map((m) => expected.toMillis() - m * 60_000).filter(shows);
				return [time, Math.min(expected.toMillis(), ...twice)];
			});
			expect(got).toEqual(want);
			const kept = times.flatMap((time, i) => (read[i] ? [{ time, at: read[i] }] : []));
			expect(kept.map(({ at }) => toLocalParts(at, tz))).toEqual(
				kept.map(({ time }) => ({ date: day, time }))
			);
			expect(kept.map(({ time }) => fromWallClock(`${day}T${time}:00`, tz))).toEqual(
				kept.map(({ at }) => at)
			);
			// Only the quarter hours the clock jumps over in spring are refused.
			expect(times.length - kept.length).toBe(Math.max(0, shiftOn(day, tz)) / 15);
		}
	);

	it.each(cases)('$tz: the ISO week of $day, its hours and edges', ({ tz, day }) => {
		const week = isoWeekOf(new Date(midnight(day, tz) + 12 * HOUR), tz);
		const monday = DateTime.fromISO(day, { zone: tz }).startOf('week');
		const next = monday.plus({ weeks: 1 });
		expect(week).toEqual({
			key: monday.toFormat("kkkk-'W'WW"),
			start: monday.toJSDate(),
			end: next.toJSDate(),
			hours: 168 - shiftOn(day, tz) / 60
		});
		// The week starts at Monday 00:00 on the zone's clock and ends, excluded, at the next one.
		const ms = (d: Date, delta: number) => new Date(d.getTime() + delta);
		expect(isoWeekOf(ms(week.start, -1), tz).end).toEqual(week.start);
		expect(isoWeekOf(week.start, tz).key).toBe(week.key);
		expect(isoWeekOf(ms(week.end, -1), tz).key).toBe(week.key);
		expect(isoWeekOf(week.end, tz).start).toEqual(week.end);
		expect(isoWeeksCovering(week.start, week.end, tz)).toEqual([week]);
		expect(isoWeeksCovering(ms(week.start, -1), ms(week.end, 1), tz).map((w) => w.key)).toEqual([
			isoWeekOf(ms(week.start, -1), tz).key,
			week.key,
			isoWeekOf(week.end, tz).key
		]);
	});
});

describe('zoneOf', () => {
	it('keeps one zone per name that luxon takes for that IANA zone', () => {
		const zone = zoneOf('Europe/Berlin');
		expect(zoneOf('Europe/Berlin')).toBe(zone);
		expect(zone.type).toBe('iana');
		expect(zone.name).toBe('Europe/Berlin');
		expect(zone.isValid).toBe(true);
		expect(zone.equals(IANAZone.create('Europe/Berlin'))).toBe(true);
		expect(IANAZone.create('Europe/Berlin').equals(zone)).toBe(true);
		expect(zone.equals(zoneOf('Europe/London'))).toBe(false);
		const summer = at('2026-07-01T12:00:00Z').getTime();
		expect(zone.offsetName(summer, { format: 'long', locale: 'en-GB' })).toBe(
			'Central European Summer Time'
		);
		expect(zone.formatOffset(summer, 'techie')).toBe('+0200');
	});

	it('leaves what is not an IANA zone name to luxon, as the plain string was', () => {
		expect(zoneOf('UTC')).toBe(FixedOffsetZone.utcInstance);
		const when = at('2026-07-01T12:00:00Z');
		expect(isoInZone(when, 'UTC')).toBe('2026-07-01T12:00:00.000Z');
		expect(isoInZone(when, 'UTC+3')).toBe(plain(when, 'UTC+3').toISO());
		// An unknown name still gives luxon's invalid DateTime, with the same reason.
		const unknown = local(when, 'Mars/Olympus_Mons');
		expect(unknown.isValid).toBe(false);
		expect(unknown.invalidExplanation).toBe(plain(when, 'Mars/Olympus_Mons').invalidExplanation);
		expect(fromLocal('2026-07-01', '09:00', 'Mars/Olympus_Mons')).toBeNull();
		expect(zoneOf('Mars/Olympus_Mons').isValid).toBe(false);
	});

	it('asks Intl for an offset once per hour, not at every instant', () => {
		const spy = vi.spyOn(Intl.DateTimeFormat.prototype, 'formatToParts');
		try {
			// An hour no other test has touched.
			isoInZone(at('2031-06-12T09:05:00Z'), 'Europe/Berlin');
			const first = spy.mock.calls.length;
			expect(first).toBeGreaterThan(0);
			expect(isoInZone(at('2031-06-12T09:40:00Z'), 'Europe/Berlin')).toBe(
				'2031-06-12T11:40:00.000+02:00'
			);
			expect(toLocalParts(at('2031-06-12T09:59:59Z'), 'Europe/Berlin').time).toBe('11:59');
			expect(spy.mock.calls.length).toBe(first);
			// Plain luxon asks again for the same hour.
			plain(at('2031-06-12T09:40:00Z'), 'Europe/Berlin').toISO();
			expect(spy.mock.calls.length).toBeGreaterThan(first);
		} finally {
			spy.mockRestore();
		}
	});
});
