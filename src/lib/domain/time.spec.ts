import { describe, expect, it } from 'vitest';
import { clip, formatDuration, isoWeekOf, isoWeeksCovering, msWithin } from './time';

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
