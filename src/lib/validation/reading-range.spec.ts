import { describe, expect, it } from 'vitest';
import { readReadingRange } from './reading-range';

const tz = 'Europe/Berlin';
const read = (query: string, opts = {}) =>
	readReadingRange(new URLSearchParams(query), tz, {
		now: new Date('2026-12-02T08:00:00Z'),
		...opts
	});

describe('readReadingRange', () => {
	it('takes ISO date-times with an offset or Z', () => {
		expect(read('from=2026-12-01T09:00:00%2B01:00&to=2026-12-02T08:00:00Z')).toEqual({
			ok: true,
			from: new Date('2026-12-01T08:00:00Z'),
			to: new Date('2026-12-02T08:00:00Z')
		});
	});

	it('reads dates as whole days on the facility clock, the end day included', () => {
		expect(read('from=2026-11-01&to=2026-11-30')).toEqual({
			ok: true,
			from: new Date('2026-10-31T23:00:00Z'),
			to: new Date('2026-11-30T23:00:00Z')
		});
	});

	it('defaults to the last seven days', () => {
		expect(read('')).toEqual({
			ok: true,
			from: new Date('2026-11-25T08:00:00Z'),
			to: new Date('2026-12-02T08:00:00Z')
		});
	});

	it('names the bad field', () => {
		const bad = read('from=yesterday');
		expect(bad.ok).toBe(false);
		if (!bad.ok) expect(Object.keys(bad.fields)).toEqual(['from']);
		const noTime = read('from=2026-12-01T09:00');
		expect(noTime.ok).toBe(false);
		const impossible = read('from=2026-02-30');
		expect(impossible).toMatchObject({ ok: false, fields: { from: expect.any(String) } });
		expect(read('from=2026-12-02&to=2026-12-01')).toMatchObject({
			ok: false,
			fields: { to: 'The end must be after the start.' }
		});
	});

	it('refuses a range longer than allowed', () => {
		expect(read('from=2020-01-01&to=2026-01-01', { maxDays: 400 })).toMatchObject({
			ok: false,
			fields: { from: 'That range is too long.' }
		});
		expect(read('from=2020-01-01&to=2026-01-01').ok).toBe(true);
	});
});

describe('readReadingRange for an export', () => {
	it('starts where it is told when from is missing', () => {
		expect(read('to=2026-12-01', { defaultFrom: new Date(0) })).toEqual({
			ok: true,
			from: new Date(0),
			to: new Date('2026-12-01T23:00:00Z')
		});
	});
});
