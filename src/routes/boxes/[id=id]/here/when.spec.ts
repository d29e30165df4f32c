import { describe, expect, it } from 'vitest';
import { formRange, formTime } from './when';

const tz = 'Europe/Berlin';
// 10:00 in Berlin (CET, UTC+1) on Wednesday 2 December 2026.
const now = new Date('2026-12-02T09:00:00Z');

describe('phone page times', () => {
	it('writes today on the 24-hour clock alone, another day with the day', () => {
		expect(formTime(new Date('2026-12-02T13:30:00Z'), tz, now)).toBe('14:30');
		expect(formTime(new Date('2026-12-03T13:30:00Z'), tz, now)).toBe('Thu 3 Dec, 14:30');
	});

	it('says "today" for a booking within today, and both days across midnight', () => {
		expect(
			formRange(new Date('2026-12-02T08:00:00Z'), new Date('2026-12-02T10:30:00Z'), tz, now)
		).toBe('today 09:00–11:30');
		expect(
			formRange(new Date('2026-12-02T21:00:00Z'), new Date('2026-12-03T01:00:00Z'), tz, now)
		).toBe('Wed 2 Dec, 22:00 – Thu 3 Dec, 02:00');
	});
});
