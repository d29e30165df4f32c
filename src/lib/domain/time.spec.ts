import { Settings } from 'luxon';
import { describe, expect, it } from 'vitest';
import {
	CLOCK_TIME_PATTERN,
	clip,
	formatDate,
	formatDateLong,
	formatDuration,
	fromLocal,
	hoursFromMinutes,
	isoWeekOf,
	isoWeeksCovering,
	minutesFromHours,
	msWithin,
	parseClockTime
} from './time';

const tz = 'Europe/Berlin';
const at = (iso: string) => new Date(iso);

describe('ISO weeks in the facility zone', () => {
	it('names a week by its ISO week year across the year end', () => {
		// 1 Jan 2026 is a Thursday, so 2026 has 53 ISO weeks; W53 runs Mon 28 Dec 2026 to
		// Sun 3 Jan 2027 and W01 of 2027 starts Mon 4 Jan (ISO 8601 week numbering).
		expect(isoWeekOf(at('2026-12-31T12:00:00Z'), tz)).toEqual({
			key: '2026-W53',
			start: at('2026-12-27T23:00:00Z'),
			end: at('2027-01-03T23:00:00Z'),
			hours: 168
		});
		expect(isoWeekOf(at('2027-01-04T08:00:00Z'), tz).key).toBe('2027-W01');
		// The week turns at midnight on the facility's clock, not in UTC.
		expect(isoWeekOf(at('2027-01-03T22:59:59Z'), tz).key).toBe('2026-W53');
		expect(isoWeekOf(at('2027-01-03T23:00:00Z'), tz).key).toBe('2027-W01');
	});

	it('lists the whole weeks a span touches, across the year end, its end excluded', () => {
		const weeks = isoWeeksCovering(at('2026-12-30T09:00:00Z'), at('2027-01-06T09:00:00Z'), tz);
		expect(weeks.map((w) => w.key)).toEqual(['2026-W53', '2027-W01']);
		expect(isoWeeksCovering(at('2026-12-30T09:00:00Z'), at('2027-01-03T23:00:00Z'), tz)).toEqual([
			isoWeekOf(at('2026-12-30T09:00:00Z'), tz)
		]);
		expect(isoWeeksCovering(at('2027-01-03T23:00:00Z'), at('2027-01-03T23:00:00Z'), tz)).toEqual(
			[]
		);
	});

	it('has 167 real hours in the week of the spring change (29 Mar 2026) and 169 in the autumn one', () => {
		// Summer time starts Sun 29 Mar 2026 at 02:00 CET: Mon 23 Mar 00:00 CET = 22 Mar 23:00Z,
		// Mon 30 Mar 00:00 CEST = 29 Mar 22:00Z.
		expect(isoWeekOf(at('2026-03-29T12:00:00Z'), tz)).toEqual({
			key: '2026-W13',
			start: at('2026-03-22T23:00:00Z'),
			end: at('2026-03-29T22:00:00Z'),
			hours: 167
		});
		// It ends Sun 25 Oct 2026 at 03:00 CEST.
		expect(isoWeekOf(at('2026-10-25T12:00:00Z'), tz).hours).toBe(169);
	});

	it('refuses a zone it does not know', () => {
		expect(() => isoWeekOf(at('2026-12-31T12:00:00Z'), 'Mars/Olympus_Mons')).toThrow(/zone/);
	});
});

describe('clipping an interval to a window', () => {
	const from = at('2026-12-02T09:00:00Z');
	const to = at('2026-12-02T12:00:00Z');

	it('keeps the part inside, in milliseconds', () => {
		expect(msWithin(at('2026-12-02T08:00:00Z'), at('2026-12-02T10:00:00Z'), from, to)).toBe(
			3_600_000
		);
		expect(msWithin(at('2026-12-02T10:00:00Z'), at('2026-12-02T11:00:00Z'), from, to)).toBe(
			3_600_000
		);
		expect(msWithin(at('2026-12-02T12:00:00Z'), at('2026-12-02T13:00:00Z'), from, to)).toBe(0);
		expect(msWithin(at('2026-12-02T11:00:00Z'), at('2026-12-02T10:00:00Z'), from, to)).toBe(0);
	});

	it('cuts it to the window, or gives null when nothing is inside', () => {
		expect(clip(at('2026-12-02T08:00:00Z'), at('2026-12-02T13:00:00Z'), from, to)).toEqual({
			start: from,
			end: to
		});
		expect(clip(at('2026-12-02T07:00:00Z'), at('2026-12-02T09:00:00Z'), from, to)).toBeNull();
	});
});

describe('a length of time in words', () => {
	it('gives minutes, hours, or both', () => {
		expect(formatDuration(0)).toBe('0 min');
		expect(formatDuration(45)).toBe('45 min');
		expect(formatDuration(180)).toBe('3 h');
		expect(formatDuration(150)).toBe('2 h 30 min');
		expect(formatDuration(270.4)).toBe('4 h 30 min');
		// A week's quota stays in hours.
		expect(formatDuration(60 * 60)).toBe('60 h');
	});

	it('gives days and hours from 48 h on when asked, for lead times', () => {
		expect(formatDuration(36 * 60, { days: true })).toBe('36 h');
		expect(formatDuration(48 * 60, { days: true })).toBe('2 d');
		expect(formatDuration(63 * 60 + 30, { days: true })).toBe('2 d 15 h');
	});
});

describe('a time of day as typed, on the 24-hour clock', () => {
	it('writes what people type as HH:MM', () => {
		expect(parseClockTime('14:30')).toBe('14:30');
		expect(parseClockTime('9:30')).toBe('09:30');
		expect(parseClockTime('0930')).toBe('09:30');
		expect(parseClockTime('930')).toBe('09:30');
		expect(parseClockTime('1430')).toBe('14:30');
		expect(parseClockTime('14.30')).toBe('14:30');
		expect(parseClockTime('14h30')).toBe('14:30');
		expect(parseClockTime(' 9 ')).toBe('09:00');
		expect(parseClockTime('0')).toBe('00:00');
		expect(parseClockTime('23:59')).toBe('23:59');
	});

	it('refuses what is not a time on a 24-hour clock', () => {
		for (const text of [
			'',
			'24:00',
			'25',
			'9:60',
			'960',
			'12345',
			'9:5',
			'2pm',
			'2:30 PM',
			'noon',
			'-1'
		])
			expect(parseClockTime(text), text).toBeNull();
		expect(parseClockTime(null)).toBeNull();
	});

	it('is the same rule as the fields’ HTML pattern (anchored, as the browser anchors it)', () => {
		const pattern = new RegExp(`^(?:${CLOCK_TIME_PATTERN})$`, 'v');
		for (const text of ['14:30', '9:30', '0930', '930', '9', '23:59', '24:00', '9:5', '2pm', '960'])
			expect(pattern.test(text), text).toBe(parseClockTime(text) !== null);
	});

	it('reads a typed time as wall-clock time in the facility zone', () => {
		expect(fromLocal('2026-12-04', '930', tz)).toEqual(at('2026-12-04T08:30:00Z'));
		expect(fromLocal('2026-12-04', '09:30', tz)).toEqual(at('2026-12-04T08:30:00Z'));
		expect(fromLocal('2026-12-04', '9:5', tz)).toBeNull();
		// 02:30 on 29 Mar 2026 is skipped when Berlin's clocks go forward.
		expect(fromLocal('2026-03-29', '0230', tz)).toBeNull();
	});

	it('reads a time the clocks show twice as its first occurrence, whatever the date today', () => {
		// Berlin goes back from 03:00 CEST to 02:00 CET on 25 Oct 2026 (EU Directive 2000/84/EC:
		// the last Sunday of October at 01:00 UTC); 02:30 comes at 00:30 UTC and at 01:30 UTC.
		// Sydney goes back from 03:00 AEDT to 02:00 AEST on 5 Apr 2026 (NSW, first Sunday of
		// April); Lord Howe by half an hour, from 02:00 to 01:30, the same night.
		const cases: [string, string, string, string][] = [
			['Europe/Berlin', '2026-10-25', '02:30', '2026-10-25T00:30:00Z'],
			['America/New_York', '2026-11-01', '01:15', '2026-11-01T05:15:00Z'],
			['Australia/Sydney', '2026-04-05', '02:45', '2026-04-04T15:45:00Z'],
			['Australia/Lord_Howe', '2026-04-05', '01:45', '2026-04-04T14:45:00Z']
		];
		for (const today of ['2026-07-01T12:00:00Z', '2026-12-01T12:00:00Z']) {
			Settings.now = () => Date.parse(today);
			try {
				for (const [zone, date, time, first] of cases)
					expect(fromLocal(date, time, zone), `${zone} ${time}, today ${today}`).toEqual(at(first));
			} finally {
				Settings.now = () => Date.now();
			}
		}
		// Outside the repeated hour nothing changes.
		expect(fromLocal('2026-10-25', '03:30', tz)).toEqual(at('2026-10-25T02:30:00Z'));
		expect(fromLocal('2026-10-25', '01:30', tz)).toEqual(at('2026-10-24T23:30:00Z'));
	});
});

describe('dates written out, whatever the browser’s language', () => {
	it('gives the weekday and the month in words', () => {
		expect(formatDateLong('2026-12-04')).toBe('Friday 4 December 2026');
		expect(formatDateLong('2027-01-31')).toBe('Sunday 31 January 2027');
		expect(formatDateLong('')).toBe('');
		expect(formatDateLong('2026-02-30')).toBe('');
		expect(formatDateLong('4/12/2026')).toBe('');
	});

	it('names days in the facility’s language, not the runtime’s', async () => {
		const { Settings } = await import('luxon');
		const before = Settings.defaultLocale;
		Settings.defaultLocale = 'de-DE';
		try {
			expect(formatDate(at('2026-12-04T09:00:00Z'), tz)).toBe('Fri 4 Dec 2026');
			expect(formatDateLong('2026-12-04')).toBe('Friday 4 December 2026');
		} finally {
			Settings.defaultLocale = before;
		}
	});
});

describe('hours for a field that takes hours', () => {
	it('goes from minutes to hours and back to the same minute', () => {
		expect(hoursFromMinutes(720)).toBe('12');
		expect(hoursFromMinutes(450)).toBe('7.5');
		expect(hoursFromMinutes(100)).toBe('1.67');
		for (const m of [0, 1, 59, 100, 450, 720, 10080])
			expect(minutesFromHours(Number(hoursFromMinutes(m))), String(m)).toBe(m);
		expect(minutesFromHours(7.5)).toBe(450);
	});
});
