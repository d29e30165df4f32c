import { describe, expect, it } from 'vitest';
import {
	addDays,
	dayHeading,
	listDayHeading,
	rangeTitle,
	swipeStep,
	within,
	ymd
} from './calendar-view';

describe('calendar headings', () => {
	it('writes a column as weekday, day and month, never a numeric day/month', () => {
		expect(dayHeading('2026-12-04')).toBe('Fri 4 Dec');
		expect(dayHeading('2026-11-30')).toBe('Mon 30 Nov');
		expect(listDayHeading('2026-12-04')).toBe('Friday 4 December');
	});

	it('titles one day, a week in a month, across months and across years', () => {
		expect(rangeTitle('2026-12-04', '2026-12-05')).toBe('Friday 4 December 2026');
		expect(rangeTitle('2026-12-07', '2026-12-14')).toBe('7–13 Dec 2026');
		expect(rangeTitle('2026-11-30', '2026-12-07')).toBe('30 Nov – 6 Dec 2026');
		expect(rangeTitle('2026-12-28', '2027-01-04')).toBe('28 Dec 2026 – 3 Jan 2027');
	});

	it('reads the wall clock fields of a date and counts days across a month end', () => {
		expect(ymd(new Date(2026, 11, 4, 23, 30))).toBe('2026-12-04');
		expect(addDays('2026-11-30', 1)).toBe('2026-12-01');
		expect(addDays('2026-03-29', -1)).toBe('2026-03-28');
		expect(within('2026-12-06', '2026-11-30', '2026-12-07')).toBe(true);
		expect(within('2026-12-07', '2026-11-30', '2026-12-07')).toBe(false);
	});
});

describe('swipeStep', () => {
	it('turns a clear sideways swipe into the next or previous day', () => {
		expect(swipeStep(-120, 10)).toBe(1);
		expect(swipeStep(90, -20)).toBe(-1);
	});

	it('ignores taps, short moves and scrolls up or down', () => {
		expect(swipeStep(3, 2)).toBe(0);
		expect(swipeStep(-50, 0)).toBe(0);
		expect(swipeStep(-100, 80)).toBe(0);
	});
});
