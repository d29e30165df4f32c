import { describe, expect, it } from 'vitest';
import { looksBinary, parseReadingsCsv, parseTime, timeParser } from './readings-csv';

const tz = 'Europe/Berlin';
const now = new Date('2026-12-01T12:00:00Z');
const parse = (text: string) => parseReadingsCsv(text, { tz, now });

describe('parseReadingsCsv', () => {
	it('reads a plain log, any column order and header spelling', () => {
		const result = parse(
			'H2O (ppm);Time;O₂ ppm\n0.4;2026-11-30T10:00:00Z;0.8\n0.5;2026-11-30 11:00;1.2\n'
		);
		expect(result).toEqual({
			ok: true,
			// Line 3 names the same instant on the facility's clock (CET, UTC+1): a duplicate.
			rows: [{ line: 2, at: new Date('2026-11-30T10:00:00Z'), o2Ppm: 0.8, h2oPpm: 0.4 }],
			rejected: [],
			duplicatesInFile: 1
		});
	});

	it('rejects each bad row with its line and reason, and keeps the rest', () => {
		const result = parse(
			[
				'time,o2_ppm,h2o_ppm',
				'2026-11-30T10:00:00Z,0.8,0.4',
				'2026-11-30T10:01:00Z,abc,0.4',
				'2026-11-30T10:02:00Z,-1,0.4',
				'yesterday,0.8,0.4',
				'2027-01-01T00:00:00Z,0.8,0.4',
				'2026-03-29 02:30,0.8,0.4',
				'2026-11-30T10:03:00Z,0.8',
				'',
				'2026-11-30T10:04:00+01:00,0.9,0.5'
			].join('\r\n')
		);
		if (!result.ok) throw new Error(result.message);
		expect(result.rows.map((r) => r.line)).toEqual([2, 10]);
		expect(result.rejected).toEqual([
			{ line: 3, reason: 'O₂ must be a number of ppm.' },
			{ line: 4, reason: 'O₂ cannot be negative.' },
			{ line: 5, reason: expect.stringContaining('is not a time') },
			{ line: 6, reason: 'the time is in the future' },
			{ line: 7, reason: expect.stringContaining('does not exist') },
			{ line: 8, reason: 'expected 3 columns, found 2' }
		]);
	});

	it('refuses a wrong header, an empty file and a binary file as a whole', () => {
		expect(parse('when,oxygen level,water\n1,2,3')).toEqual({
			ok: false,
			message: expect.stringContaining('must name the columns time, O2 ppm and H2O ppm')
		});
		expect(parse('')).toEqual({ ok: false, message: expect.stringContaining('empty') });
		const png = new TextDecoder().decode(new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0, 0, 0xff]));
		expect(looksBinary(png)).toBe(true);
		expect(parse(png)).toEqual({ ok: false, message: 'That file is not a CSV text file.' });
	});
});

describe('parseTime', () => {
	it('takes offsets as written and local times on the facility clock', () => {
		expect(parseTime('2026-07-01T12:00:00+02:00', tz)).toEqual(new Date('2026-07-01T10:00:00Z'));
		expect(parseTime('2026-07-01 12:00:00', tz)).toEqual(new Date('2026-07-01T10:00:00Z'));
		expect(parseTime('2026-07-01 12:00', tz)).toEqual(new Date('2026-07-01T10:00:00Z'));
	});
});

describe('timeParser', () => {
	it('reads every shape as the general parser does, across both clock changes', () => {
		const fast = timeParser(tz);
		const samples = [
			'2026-11-30T10:00:00Z',
			'2026-11-30 10:00:00Z',
			'2026-11-30T10:00:00.250+01:00',
			'2026-11-30T10:00:00+0100',
			'2026-11-30T10:00+01',
			'2026-11-30 10:00',
			'2026-11-30T10:00:05',
			'2026-10-25 01:59',
			'2026-10-25 02:30', // the hour that happens twice: refused without an offset
			'2026-10-25T02:30:00+02:00',
			'2026-10-25T02:30:00+01:00',
			'2026-02-30T10:00:00Z', // no such day, with an offset
			'2026-10-25 03:00',
			'2026-03-29 01:59',
			'2026-03-29 02:30', // skipped when the clocks went forward
			'2026-03-29 03:00',
			'2026-02-30 10:00', // no such day
			'2026-11-30 24:00'
		];
		for (const s of samples) expect([s, fast(s)]).toEqual([s, parseTime(s, tz)]);
	});
});

describe('clock changes and impossible dates', () => {
	it('refuses a local time the clocks pass twice, and a day that does not exist', () => {
		const fast = timeParser(tz);
		expect(fast('2026-10-25 02:30')).toMatch(/happens twice/);
		expect(fast('2026-10-25T02:30:00+01:00')).toEqual(new Date('2026-10-25T01:30:00Z'));
		expect(fast('2026-02-30T10:00:00Z')).toMatch(/is not a time/);
		expect(fast('2026-10-25 01:59')).toEqual(new Date('2026-10-24T23:59:00Z'));
		expect(fast('2026-10-25 03:00')).toEqual(new Date('2026-10-25T02:00:00Z'));
	});
});
