import { DateTime } from 'luxon';
import { describe, expect, it } from 'vitest';
import { field as csvField } from './usage';
import {
	exportFilename,
	READINGS_CSV_HEADER,
	readingCsvLine,
	zoneStamper
} from './readings-export';

describe('zoneStamper', () => {
	it('agrees with luxon minute by minute across both daylight-saving changes of a year', () => {
		for (const tz of [
			'Europe/Berlin',
			'America/New_York',
			'Australia/Lord_Howe',
			'Asia/Kathmandu'
		]) {
			const stamp = zoneStamper(tz);
			const checks = [
				// Each change, a minute at a time around it (Lord Howe moves by 30 minutes).
				...['2026-03-29T00:00:00Z', '2026-10-25T00:00:00Z', '2026-03-08T06:00:00Z'],
				...['2026-11-01T05:00:00Z', '2026-04-04T14:00:00Z', '2026-10-03T15:00:00Z']
			];
			for (const start of checks) {
				for (let i = 0; i < 180; i++) {
					const at = new Date(Date.parse(start) + i * 60_000 + 7_000);
					expect(stamp(at), `${tz} ${at.toISOString()}`).toBe(
						DateTime.fromJSDate(at, { zone: tz }).toISO({ suppressMilliseconds: true })
					);
				}
			}
		}
	});

	it('writes the offset of the zone', () => {
		const stamp = zoneStamper('Europe/Berlin');
		expect(stamp(new Date('2026-12-01T08:00:00Z'))).toBe('2026-12-01T09:00:00+01:00');
		expect(stamp(new Date('2026-07-01T08:00:00Z'))).toBe('2026-07-01T10:00:00+02:00');
		expect(zoneStamper('America/Santiago')(new Date('2026-07-01T08:00:00Z'))).toBe(
			'2026-07-01T04:00:00-04:00'
		);
	});

	it('refuses an unknown zone', () => {
		expect(() => zoneStamper('Mars/Olympus')).toThrow(/Unknown time zone/);
	});
});

describe('CSV lines', () => {
	const stamp = zoneStamper('UTC');
	it('has the documented header', () => {
		expect(READINGS_CSV_HEADER).toBe('time,o2_ppm,h2o_ppm,source,note');
	});

	it('writes a reading and quotes a note only when it must', () => {
		const at = new Date('2026-12-01T08:00:00Z');
		expect(readingCsvLine({ at, o2Ppm: 0.4, h2oPpm: 0.6, source: 'csv', note: null }, stamp)).toBe(
			'2026-12-01T08:00:00+00:00,0.4,0.6,csv,\r\n'
		);
		expect(
			readingCsvLine(
				{ at, o2Ppm: 1.25, h2oPpm: 0, source: 'manual', note: 'seal "hissing", left port' },
				stamp
			)
		).toBe('2026-12-01T08:00:00+00:00,1.25,0,manual,"seal ""hissing"", left port"\r\n');
	});

	it('keeps a note from running as a spreadsheet formula', () => {
		expect(csvField('=HYPERLINK("x")')).toBe(`"'=HYPERLINK(""x"")"`);
		expect(csvField('-2 ppm drift')).toBe("'-2 ppm drift");
		expect(csvField('fine')).toBe('fine');
	});

	it('names the file after the box and the days on the facility clock', () => {
		const from = new Date('2026-10-31T23:00:00Z'); // 1 Nov 00:00 in Berlin
		const to = new Date('2026-11-30T23:00:00Z'); // 1 Dec 00:00, exclusive
		expect(exportFilename('Heron (Ar) #2', from, to, 'Europe/Berlin')).toBe(
			'Heron-Ar-2-readings-2026-11-01-to-2026-11-30.csv'
		);
	});
});
