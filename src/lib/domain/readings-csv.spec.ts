import { describe, expect, it } from 'vitest';
import { DateTime } from 'luxon';
import {
	looksBinary,
	parseReadingsCsv,
	parseTime,
	previewOf,
	timeReader,
	type ParsedCsv
} from './readings-csv';
import { READINGS_CSV_HEADER, readingCsvLine, zoneStamper } from './readings-export';

const tz = 'Europe/Berlin';
const now = new Date('2026-12-01T12:00:00Z');
const parse = (text: string) => parseReadingsCsv(text, { tz, now });
const ok = (text: string) => {
	const result = parse(text);
	if (!result.ok) throw new Error(result.message);
	return result;
};
const refusal = (text: string) => {
	const result = parse(text);
	if (result.ok) throw new Error('the file was read');
	return result.message;
};
const readings = (result: Extract<ParsedCsv, { ok: true }>) =>
	result.rows.map((r) => [r.at.toISOString(), r.o2Ppm, r.h2oPpm]);

describe('parseReadingsCsv: separators, decimal marks and headers', () => {
	it('reads semicolons, decimal commas and a German header with units in brackets', () => {
		const result = ok(
			'Zeit;O2 (ppm);H2O (ppm)\n30.11.2026 10:00:00;0,45;0,3\n30.11.2026 10:01;1,2;12\n'
		);
		expect(result.layout).toEqual({
			separator: ';',
			decimalMark: ',',
			header: true,
			columns: {
				time: { index: 0, name: 'Zeit' },
				o2: { index: 1, name: 'O2 (ppm)' },
				h2o: { index: 2, name: 'H2O (ppm)' }
			}
		});
		// 30 November is CET (UTC+1) on the facility's clock.
		expect(readings(result)).toEqual([
			['2026-11-30T09:00:00.000Z', 0.45, 0.3],
			['2026-11-30T09:01:00.000Z', 1.2, 12]
		]);
		expect(result.dateFormats).toEqual(['dmy-dot']);
		expect(result.localTimes).toBe(true);
		expect(result.lines).toBe(2);
	});

	it('reads tabs', () => {
		const result = ok('timestamp\toxygen [ppm]\tmoisture [ppm]\n2026-11-30T10:00:00Z\t0.5\t0.7\n');
		expect(result.layout.separator).toBe('\t');
		expect(readings(result)).toEqual([['2026-11-30T10:00:00.000Z', 0.5, 0.7]]);
		expect(result.dateFormats).toEqual(['iso-offset']);
		expect(result.localTimes).toBe(false);
	});

	it('reads tabs with decimal commas', () => {
		const result = ok('Zeitstempel\tSauerstoff\tFeuchte\n30.11.2026 10:00\t0,5\t0,7\n');
		expect(result.layout).toMatchObject({ separator: '\t', decimalMark: ',' });
		expect(readings(result)).toEqual([['2026-11-30T09:00:00.000Z', 0.5, 0.7]]);
	});

	it('reads commas with an English header, any column order and header spelling', () => {
		const result = ok(
			'H2O ppm,Time,O₂ (ppm)\r\n0.4,2026-11-30T10:00:00Z,0.8\r\n0.5,2026-11-30 11:00,1.2\r\n'
		);
		expect(result.layout).toMatchObject({ separator: ',', decimalMark: '.', header: true });
		// Line 3 names the same instant on the facility's clock (CET, UTC+1): a duplicate.
		expect(result.rows).toEqual([
			{ line: 2, at: new Date('2026-11-30T10:00:00Z'), o2Ppm: 0.8, h2oPpm: 0.4 }
		]);
		expect(result.duplicatesInFile).toBe(1);
		expect(result.dateFormats).toEqual(['iso-offset', 'ymd']);
	});

	it('finds the columns in French, Spanish, Italian and Dutch, with accents and any case', () => {
		const headers = [
			'Horodatage;Oxygène (ppm);Humidité (ppm)',
			'Fecha y hora;OXÍGENO (ppm);Humedad (ppm)',
			'Data e ora;Ossigeno;Umidità',
			'Tijdstip;Zuurstof (ppm);Vocht (ppm)',
			'heure;O2-Konzentration;H2O-Gehalt',
			'Datum/Uhrzeit;Restsauerstoff [ppm];Restfeuchte [ppm]'
		];
		for (const header of headers) {
			const result = ok(`${header}\n30.11.2026 10:00;0,5;0,7\n`);
			expect([header, readings(result)]).toEqual([
				header,
				[['2026-11-30T09:00:00.000Z', 0.5, 0.7]]
			]);
		}
	});

	it('reads a date column and a time column', () => {
		const result = ok('Datum;Uhrzeit;O2;H2O\n30.11.2026;10:00:05;0,5;0,7\n');
		expect(result.layout.columns).toEqual({
			date: { index: 0, name: 'Datum' },
			time: { index: 1, name: 'Uhrzeit' },
			o2: { index: 2, name: 'O2' },
			h2o: { index: 3, name: 'H2O' }
		});
		expect(readings(result)).toEqual([['2026-11-30T09:00:05.000Z', 0.5, 0.7]]);
		// A French "date" column alone holds the whole time.
		expect(readings(ok('date;O2;H2O\n30/11/2026 10:00;0,5;0,7\n'))).toEqual([
			['2026-11-30T09:00:00.000Z', 0.5, 0.7]
		]);
	});

	it('takes the columns by position when the first line is already a reading', () => {
		const result = ok('2026-11-30 10:00;0,45;0,3\n2026-11-30 10:01;0,46;0,3\n');
		expect(result.layout).toEqual({
			separator: ';',
			decimalMark: ',',
			header: false,
			columns: {
				time: { index: 0, name: 'column 1 (time)' },
				o2: { index: 1, name: 'column 2 (O2)' },
				h2o: { index: 2, name: 'column 3 (H2O)' }
			}
		});
		expect(result.rows.map((r) => r.line)).toEqual([1, 2]);
		expect(readings(ok('2026-11-30T10:00:00Z,0.45,0.3\n'))).toEqual([
			['2026-11-30T10:00:00.000Z', 0.45, 0.3]
		]);
		// A date and a time of day as the first two columns.
		expect(readings(ok('30.11.2026\t10:00\t0,45\t0,3\n'))).toEqual([
			['2026-11-30T09:00:00.000Z', 0.45, 0.3]
		]);
	});

	it('tolerates a BOM, quoted fields, CRLF, "sep=" and blank trailing lines', () => {
		const result = ok(
			'\uFEFFsep=;\r\n"Zeit";"O2 (ppm)";"H2O (ppm)"\r\n"30.11.2026 10:00";"0,45";"0,3"\r\n;;\r\n\r\n\r\n'
		);
		expect(result.layout.columns.time.name).toBe('Zeit');
		expect(result.rows).toEqual([
			{ line: 3, at: new Date('2026-11-30T09:00:00Z'), o2Ppm: 0.45, h2oPpm: 0.3 }
		]);
		expect(result.rejected).toEqual([]);
		expect(result.lines).toBe(1);
	});
});

describe('parseReadingsCsv: refusals quote the file', () => {
	it('quotes a header it does not understand exactly as written, with its own separators', () => {
		expect(refusal('when;oxygen level;water\n1;2;3')).toBe(
			'The header line "when;oxygen level;water" names no column for the time. ' +
				'Name the columns for the time, O2 (ppm) and H2O (ppm), e.g. "time,O2 (ppm),H2O (ppm)" or ' +
				'"Zeit;O2 (ppm);H2O (ppm)", or leave the header out and put the columns in that order.'
		);
		expect(refusal('Zeit\tTemperatur (°C)\tDruck (mbar)\n')).toContain(
			'"Zeit\tTemperatur (°C)\tDruck (mbar)" names no column for O2 (ppm) or H2O (ppm).'
		);
	});

	it('refuses a column in another unit, and two O2 columns', () => {
		expect(refusal('Zeit;O2 (%);H2O (ppm)\n')).toBe(
			'The column "O2 (%)" is in %, not in ppm; readings are stored in ppm (1 % is 10,000 ppm).'
		);
		expect(refusal('time,O2,H2O,oxygen\n')).toContain(
			'more than one O2 column ("O2" and "oxygen")'
		);
	});

	it('refuses decimal commas in a file separated by commas, clearly', () => {
		expect(refusal('time,O2 (ppm),H2O (ppm)\n2026-11-30T10:00:00Z,0,45,0,3\n')).toBe(
			'Line 2, "2026-11-30T10:00:00Z,0,45,0,3", has 5 values where the header ' +
				'"time,O2 (ppm),H2O (ppm)" names 3 columns: a file separated by commas cannot use ' +
				'decimal commas. Write decimal points (0.45), or separate the columns with semicolons.'
		);
		expect(refusal('2026-11-30T10:00:00Z,0,45,0,3\n')).toContain(
			'a file separated by commas cannot use decimal commas'
		);
		// Quoted, a decimal comma keeps the columns apart but is still refused by name.
		const quoted = ok('time,O2,H2O\n2026-11-30T10:00:00Z,"0,45",0.3\n');
		expect(quoted.rejected).toEqual([
			{
				line: 2,
				reason:
					'column "O2" holds "0,45", which has a decimal comma: in a file separated by commas write decimal points (0.45), or separate the columns with semicolons'
			}
		]);
	});

	it('rejects each bad row with its line, column and own words, and keeps the rest', () => {
		const result = ok(
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
				'2026-11-30T10:04:00+01:00,0.9,0.5',
				'2026-11-30T10:05:00Z,0.9,',
				',0.9,0.5'
			].join('\r\n')
		);
		expect(result.rows.map((r) => r.line)).toEqual([2, 10]);
		expect(result.rejected).toEqual([
			{ line: 3, reason: 'column "o2_ppm" holds "abc", which is not a number' },
			{ line: 4, reason: 'column "o2_ppm" holds "-1": O₂ cannot be negative.' },
			{
				line: 5,
				reason:
					'column "time" holds "yesterday", which is not a date and time this import reads (e.g. 2026-11-30 14:05, 30.11.2026 14:05 or 2026-11-30T14:05:00Z)'
			},
			{ line: 6, reason: 'column "time" holds "2027-01-01T00:00:00Z", which is in the future' },
			{
				line: 7,
				reason:
					'column "time" holds "2026-03-29 02:30", which does not exist on the facility\'s clock (the clocks went forward)'
			},
			{ line: 8, reason: 'expected 3 columns, found 2' },
			{ line: 11, reason: 'column "h2o_ppm" is empty' },
			{ line: 12, reason: 'column "time" holds nothing' }
		]);
		// Eleven lines after the header, one of them blank.
		expect(result.lines).toBe(10);
	});

	it('names a decimal mark that differs from the rest of the file', () => {
		const result = ok('Zeit;O2;H2O\n30.11.2026 10:00;0,5;0,7\n30.11.2026 10:01;0.5;0,7\n');
		expect(result.rejected).toEqual([
			{
				line: 3,
				reason:
					'column "O2" holds "0.5", which has a decimal point, but this file\'s other numbers use decimal commas'
			}
		]);
	});

	it('names both columns when the date and the time are apart', () => {
		const result = ok('Datum;Uhrzeit;O2;H2O\n31.11.2026;10:00;0,5;0,7\n');
		expect(result.rejected).toEqual([
			{
				line: 2,
				reason:
					'columns "Datum" and "Uhrzeit" hold "31.11.2026 10:00", which is not a real date and time'
			}
		]);
	});

	it('refuses an empty file and a binary file as a whole', () => {
		expect(refusal('')).toContain('empty');
		expect(refusal('\uFEFF\r\n\r\n')).toContain('empty');
		const png = new TextDecoder().decode(new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0, 0, 0xff]));
		expect(looksBinary(png)).toBe(true);
		expect(refusal(png)).toBe('That file is not a CSV text file.');
	});
});

describe('dates in each format', () => {
	// 30 November 2026 14:05:09 on the facility's clock (CET) is 13:05:09 UTC.
	const at = '2026-11-30T13:05:09.000Z';
	const cases: [string, string, string][] = [
		['2026-11-30T14:05:09+01:00', at, 'iso-offset'],
		['2026-11-30T13:05:09Z', at, 'iso-offset'],
		['2026-11-30 13:05:09Z', at, 'iso-offset'],
		['2026-11-30T14:05:09', at, 'iso-local'],
		['2026-11-30 14:05:09', at, 'ymd'],
		['2026-11-30 14:05', '2026-11-30T13:05:00.000Z', 'ymd'],
		['30.11.2026 14:05:09', at, 'dmy-dot'],
		['30.11.2026 14:05', '2026-11-30T13:05:00.000Z', 'dmy-dot'],
		['1.12.2025 9:05', '2025-12-01T08:05:00.000Z', 'dmy-dot'],
		['30/11/2026 14:05:09', at, 'dmy-slash'],
		['30-11-2026 14:05:09', at, 'dmy-dash'],
		['20261130T130509Z', at, 'iso-other']
	];
	it.each(cases)('%s', (text, instant, format) => {
		const read = timeReader(tz)(text);
		if (typeof read === 'string') throw new Error(read);
		expect([read.at.toISOString(), read.format]).toEqual([instant, format]);
	});

	it('reads slashes month first when a day beyond 12 shows it, and says so', () => {
		const result = ok('time;O2;H2O\n11/29/2026 14:05;0,5;0,7\n11/30/2026 14:05;0,5;0,7\n');
		expect(result.dateFormats).toEqual(['mdy-slash']);
		expect(result.rows[1].at.toISOString()).toBe('2026-11-30T13:05:00.000Z');
		expect(ok('time;O2;H2O\n01/11/2026 14:05;0,5;0,7\n').dateFormats).toEqual(['dmy-slash']);
	});
});

describe('times on the facility clock', () => {
	/** The instant luxon gives for a wall-clock time in the zone. */
	const wall = (text: string) =>
		DateTime.fromFormat(text, 'yyyy-MM-dd HH:mm', { zone: tz }).toJSDate();

	it('takes offsets as written and local times on the facility clock, across both clock changes', () => {
		const read = timeReader(tz);
		const at = (text: string) => {
			const r = read(text);
			return typeof r === 'string' ? r : r.at;
		};
		expect(at('2026-07-01T12:00:00+02:00')).toEqual(new Date('2026-07-01T10:00:00Z'));
		expect(at('01.07.2026 12:00')).toEqual(new Date('2026-07-01T10:00:00Z'));
		for (const t of [
			'2026-10-25 01:59',
			'2026-10-25 03:00',
			'2026-03-29 01:59',
			'2026-03-29 03:00'
		])
			expect([t, at(t)]).toEqual([t, wall(t)]);
		expect(at('2026-10-25T02:30:00+01:00')).toEqual(new Date('2026-10-25T01:30:00Z'));
		expect(at('2026-10-25T02:30:00+02:00')).toEqual(new Date('2026-10-25T00:30:00Z'));
	});

	it('refuses a local time the clocks skip or pass twice, and a day or hour that does not exist', () => {
		const read = timeReader(tz);
		expect(read('2026-03-29 02:30')).toMatch(/does not exist on the facility's clock/);
		expect(read('29.03.2026 02:30')).toMatch(/does not exist on the facility's clock/);
		expect(read('2026-10-25 02:30')).toMatch(/happens twice/);
		expect(read('25/10/2026 02:30')).toMatch(/happens twice/);
		expect(read('2026-02-30T10:00:00Z')).toBe('is not a real date and time');
		expect(read('30.02.2026 10:00')).toBe('is not a real date and time');
		expect(read('2026-11-30 24:00')).toBe('is not a real date and time');
		expect(read('2026-11-30')).toMatch(/is not a date and time this import reads/);
		expect(parseTime('2026-10-25 02:30', tz)).toMatch(/^"2026-10-25 02:30" happens twice/);
	});
});

describe('a box’s own export', () => {
	it('imports back to the same instants, across the clocks going back', () => {
		const stamp = zoneStamper(tz);
		// 2026-10-25 00:30 UTC to 01:30 UTC: 02:30 on the facility's clock twice.
		const ats = [0, 30, 60, 90].map((m) => new Date(Date.UTC(2026, 9, 25, 0, m)));
		const text =
			`${READINGS_CSV_HEADER}\r\n` +
			ats
				.map((at, i) =>
					readingCsvLine(
						{ at, o2Ppm: 0.5 + i, h2oPpm: 0.25, source: 'csv', note: i ? null : 'a, b' },
						stamp
					)
				)
				.join('');
		const result = ok(text);
		expect(result.rejected).toEqual([]);
		expect(result.rows.map((r) => r.at)).toEqual(ats);
		expect(result.rows.map((r) => r.o2Ppm)).toEqual([0.5, 1.5, 2.5, 3.5]);
	});
});

describe('previewOf', () => {
	it('says what the file was understood as, in the file’s own words and the facility’s clock', () => {
		const text = [
			'Zeit;O2 (ppm);H2O (ppm)',
			...Array.from({ length: 7 }, (_, i) => `30.11.2026 10:0${i};0,4${i};0,3`),
			'30.11.2026 10:09;viel;0,3'
		].join('\n');
		const preview = previewOf(ok(text), tz);
		expect(preview).toMatchObject({
			separator: 'semicolon',
			decimalMark: 'comma',
			header: true,
			columns: { time: 'Zeit', date: null, o2: 'O2 (ppm)', h2o: 'H2O (ppm)' },
			dateFormats: ['dd.mm.yyyy hh:mm[:ss]'],
			timeZone: tz,
			localTimes: true,
			lines: 8
		});
		expect(preview.first).toHaveLength(5);
		expect(preview.first[0]).toEqual({
			line: 2,
			cells: { time: '30.11.2026 10:00', o2: '0,40', h2o: '0,3' },
			at: '2026-11-30T09:00:00.000Z',
			shown: 'Mon 30 Nov 2026, 10:00:00',
			o2Ppm: 0.4,
			h2oPpm: 0.3
		});
	});
});
