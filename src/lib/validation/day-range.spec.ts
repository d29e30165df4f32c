import { describe, expect, it } from 'vitest';
import { readDayRange } from './day-range';

const read = (query: string, prefix = '') =>
	readDayRange(new URLSearchParams(query), 'Europe/Berlin', prefix);

describe('readDayRange', () => {
	it('leaves both ends open when no day is given', () => {
		const r = read('');
		expect(r).toMatchObject({ values: { from: '', to: '' }, errors: {} });
		expect(r.since).toBeUndefined();
		expect(r.until).toBeUndefined();
	});

	it('takes whole days on the facility clock, the last one included', () => {
		const r = read('from=2026-11-01&to=2026-11-30');
		// Berlin is on UTC+1 in November.
		expect(r.since?.toISOString()).toBe('2026-10-31T23:00:00.000Z');
		expect(r.until?.toISOString()).toBe('2026-11-30T23:00:00.000Z');
	});

	it('counts a day across a clock change as it is on the wall (25 hours in October)', () => {
		const r = read('from=2026-10-25&to=2026-10-25');
		expect(r.until!.getTime() - r.since!.getTime()).toBe(25 * 3_600_000);
	});

	it('reads the list’s own parameters when it has a prefix', () => {
		const r = read('from=2026-01-01&log.from=2026-02-01', 'log');
		expect(r.values.from).toBe('2026-02-01');
	});

	it('refuses a day that does not exist and a range that runs backwards, naming the field', () => {
		const bad = read('from=2026-02-30');
		expect(Object.keys(bad.errors)).toEqual(['from']);
		expect(bad.since).toBeUndefined();
		const backwards = read('from=2026-03-02&to=2026-03-01');
		expect(backwards.errors).toEqual({ to: 'The last day is before the first.' });
		expect(backwards.values).toEqual({ from: '2026-03-02', to: '2026-03-01' });
		expect(backwards.since).toBeDefined();
		expect(backwards.until).toBeUndefined();
	});

	it('keeps the end that can be read when the other cannot', () => {
		const r = read('from=2026-02-30&to=2026-01-01');
		expect(Object.keys(r.errors)).toEqual(['from']);
		expect(r.since).toBeUndefined();
		expect(r.until?.toISOString()).toBe('2026-01-01T23:00:00.000Z');
		expect(read('from=yesterday').errors.from).toMatch(/2026-12-01/);
	});
});
