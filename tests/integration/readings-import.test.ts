// Sensor logs as they come: the preview says what the file was understood as and stores
// nothing; the import then stores what the preview promised. Every box is the test's own,
// and every time is a fixed one in the past.
import { afterAll, describe, expect, it } from 'vitest';
import { asc, count, eq } from 'drizzle-orm';
import { DateTime } from 'luxon';
import { atmosphereReadings } from '../../src/lib/server/db/schema';
import { closeTestDb, makeBox, makeUser, testDb } from '../support/db';
import { errorOf, signedIn } from '../support/http';
import { facilityTz } from '../support/time';

afterAll(closeTestDb);

type Client = Awaited<ReturnType<typeof signedIn>>;

const readingsOf = async (boxId: number) =>
	(
		await testDb()
			.select({ n: count() })
			.from(atmosphereReadings)
			.where(eq(atmosphereReadings.boxId, boxId))
	)[0].n;

/** The file as a browser uploads it: the `file` field of a form, with `mode`. */
function upload(client: Client, boxId: number, csv: string, mode?: string, query = '') {
	const form = new FormData();
	form.set('file', new Blob([csv], { type: 'text/csv' }), 'sensor-log.csv');
	if (mode) form.set('mode', mode);
	return client.request('POST', `/api/boxes/${boxId}/readings/import${query}`, form, {
		accept: 'application/json'
	});
}

/** The file as the request body, as a script sends it. */
const postCsv = (client: Client, boxId: number, csv: string, query = '') =>
	client.request('POST', `/api/boxes/${boxId}/readings/import${query}`, csv, {
		'content-type': 'text/csv'
	});

/** A wall-clock time as the file writes it (dd.mm.yyyy HH:mm:ss), as the instant it names. */
const onFacilityClock = (text: string) =>
	DateTime.fromFormat(text, 'dd.MM.yyyy HH:mm:ss', { zone: facilityTz }).toJSDate();

/** Seven readings a minute apart on 30 November 2026, and one with a word for H2O. */
const germanLog = [
	'Zeit;O2 (ppm);H2O (ppm)',
	...[0, 1, 2, 3].map((m) => `30.11.2026 10:0${m}:00;0,4${m};0,3`),
	'30.11.2026 10:04:00;0,44;viel',
	...[5, 6, 7].map((m) => `30.11.2026 10:0${m}:00;0,4${m};0,3`)
].join('\r\n');

describe('the import preview', () => {
	it('reads semicolons, decimal commas and a German header, and stores nothing', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const response = await upload(manager, boxId, germanLog, 'preview');
		expect(response.status).toBe(200);
		const { preview, report } = await response.json();
		expect(preview).toMatchObject({
			separator: 'semicolon',
			decimalMark: 'comma',
			header: true,
			columns: { time: 'Zeit', date: null, o2: 'O2 (ppm)', h2o: 'H2O (ppm)' },
			dateFormats: ['dd.mm.yyyy hh:mm[:ss]'],
			timeZone: facilityTz,
			localTimes: true,
			lines: 8
		});
		expect(preview.first).toHaveLength(5);
		expect(preview.first[0]).toEqual({
			line: 2,
			cells: { time: '30.11.2026 10:00:00', o2: '0,40', h2o: '0,3' },
			at: onFacilityClock('30.11.2026 10:00:00').toISOString(),
			shown: 'Mon 30 Nov 2026, 10:00:00',
			o2Ppm: 0.4,
			h2oPpm: 0.3
		});
		expect(report).toEqual({
			imported: false,
			accepted: 7,
			duplicates: 0,
			rejectedCount: 1,
			rejected: [{ line: 6, reason: 'column "H2O (ppm)" holds "viel", which is not a number' }]
		});
		expect(await readingsOf(boxId)).toBe(0);

		// The import stores what the preview promised, at the instants it showed.
		const stored = await upload(manager, boxId, germanLog, 'import', '?skipRejected=1');
		expect(stored.status).toBe(201);
		expect((await stored.json()).report).toMatchObject({
			imported: true,
			accepted: 7,
			rejectedCount: 1
		});
		const rows = await testDb()
			.select()
			.from(atmosphereReadings)
			.where(eq(atmosphereReadings.boxId, boxId))
			.orderBy(asc(atmosphereReadings.at));
		expect(rows.map((r) => [r.at, r.o2Ppm, r.h2oPpm, r.source])).toEqual(
			[0, 1, 2, 3, 5, 6, 7].map((m) => [
				onFacilityClock(`30.11.2026 10:0${m}:00`),
				Number(`0.4${m}`),
				0.3,
				'csv'
			])
		);

		// The same file previewed again has nothing new; `?preview=1` with a plain body too.
		const again = await postCsv(manager, boxId, germanLog, '?preview=1');
		expect(again.status).toBe(200);
		expect((await again.json()).report).toMatchObject({ accepted: 0, duplicates: 7 });
		expect(await readingsOf(boxId)).toBe(7);
	});

	it('takes a tab-separated log without a header by position, with a BOM and CRLF', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const csv = '\uFEFF2026-11-30T10:00:00Z\t0.5\t0.7\r\n2026-11-30T10:01:00Z\t0.6\t0.7\r\n\r\n';
		const { preview, report } = await (await upload(manager, boxId, csv, 'preview')).json();
		expect(preview).toMatchObject({
			separator: 'tab',
			decimalMark: 'point',
			header: false,
			columns: { time: 'column 1 (time)', o2: 'column 2 (O2)', h2o: 'column 3 (H2O)' },
			dateFormats: ['ISO 8601 with offset (2026-11-30T14:05:00+01:00)'],
			localTimes: false,
			lines: 2
		});
		expect(report).toMatchObject({ accepted: 2, rejectedCount: 0 });
		const stored = await upload(manager, boxId, csv, 'import');
		expect(stored.status).toBe(201);
		expect(await readingsOf(boxId)).toBe(2);
	});

	it('names each bad row by line and column, quoting the cell; a skipped hour is refused', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const csv = [
			'Datum;Uhrzeit;Sauerstoff;Feuchte',
			'29.03.2026;01:59;0,4;0,3',
			'29.03.2026;02:30;0,4;0,3',
			'29.03.2026;03:00;-0,4;0,3',
			'29.03.2026;03:01;0.4;0,3'
		].join('\n');
		const response = await upload(manager, boxId, csv, 'preview');
		expect(response.status).toBe(200);
		const { preview, report } = await response.json();
		expect(preview.columns).toEqual({
			time: 'Uhrzeit',
			date: 'Datum',
			o2: 'Sauerstoff',
			h2o: 'Feuchte'
		});
		expect(report.rejected).toEqual([
			{
				line: 3,
				reason:
					'columns "Datum" and "Uhrzeit" hold "29.03.2026 02:30", which does not exist on the facility\'s clock (the clocks went forward)'
			},
			{ line: 4, reason: 'column "Sauerstoff" holds "-0,4": O₂ cannot be negative.' },
			{
				line: 5,
				reason:
					'column "Sauerstoff" holds "0.4", which has a decimal point, but this file\'s other numbers use decimal commas'
			}
		]);
		// Without "import the good rows" nothing is stored, as before.
		const refused = await upload(manager, boxId, csv, 'import');
		expect(refused.status).toBe(422);
		expect((await errorOf(refused)).code).toBe('rows_rejected');
		expect(await readingsOf(boxId)).toBe(0);
	});
});

describe('refusals quote the file', () => {
	it('quotes a header it does not understand exactly as written, tabs and all', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const csv = 'Wann\tSauerstoffwert\tNässe\n2026-11-30T10:00:00Z\t0.5\t0.7\n';
		const message =
			'The header line "Wann\tSauerstoffwert\tNässe" names no column for the time, O2 (ppm) or H2O (ppm). ' +
			'Name the columns for the time, O2 (ppm) and H2O (ppm), e.g. "time,O2 (ppm),H2O (ppm)" or ' +
			'"Zeit;O2 (ppm);H2O (ppm)", or leave the header out and put the columns in that order.';
		for (const response of [
			await upload(manager, boxId, csv, 'preview'),
			await upload(manager, boxId, csv, 'import')
		]) {
			expect(response.status).toBe(400);
			const error = await errorOf(response);
			expect(error.message).toBe(message);
			expect(error.details).toEqual({ fields: { file: message } });
		}
	});

	it('refuses decimal commas in a file separated by commas, quoting the line', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const response = await postCsv(
			manager,
			boxId,
			'time,O2 (ppm),H2O (ppm)\n2026-11-30T10:00:00Z,0,45,0,3\n',
			'?preview=1'
		);
		expect(response.status).toBe(400);
		expect((await errorOf(response)).message).toBe(
			'Line 2, "2026-11-30T10:00:00Z,0,45,0,3", has 5 values where the header ' +
				'"time,O2 (ppm),H2O (ppm)" names 3 columns: a file separated by commas cannot use ' +
				'decimal commas. Write decimal points (0.45), or separate the columns with semicolons.'
		);
	});

	it('keeps the preview to managers and real boxes, and refuses an unknown mode', async () => {
		const boxId = await makeBox();
		const member = await signedIn(await makeUser('member'));
		expect((await upload(member, boxId, germanLog, 'preview')).status).toBe(403);
		const manager = await signedIn(await makeUser('manager'));
		const missing = await upload(manager, 999_999_999, germanLog, 'preview');
		expect(missing.status).toBe(404);
		expect((await errorOf(missing)).code).toBe('not_found');
		const mode = await upload(manager, boxId, germanLog, 'later');
		expect(mode.status).toBe(400);
		expect((await errorOf(mode)).details).toEqual({
			fields: { mode: 'The mode is preview or import.' }
		});
		expect(await readingsOf(boxId)).toBe(0);
	});
});
