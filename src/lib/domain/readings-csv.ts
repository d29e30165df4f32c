// A sensor's log as CSV: one header line naming the columns time, O2 ppm and H2O ppm (in
// any order, any case, with spaces, underscores or a unit in brackets), then one reading
// per line. Times are ISO 8601; a time without an offset is on the facility's clock.
import Papa from 'papaparse';
import { DateTime } from 'luxon';
import { checkReading } from './atmosphere';

export type CsvReading = { line: number; at: Date; o2Ppm: number; h2oPpm: number };
export type Rejected = { line: number; reason: string };
export type ParsedCsv =
	| { ok: true; rows: CsvReading[]; rejected: Rejected[]; duplicatesInFile: number }
	| { ok: false; message: string };

/** Larger files are refused before parsing (a year of one reading a minute is about 20 MB). */
export const MAX_CSV_BYTES = 25 * 1024 * 1024;
/** A report lists this many rejected rows and counts the rest. */
export const MAX_REJECTED_LISTED = 200;
/** Readings before this are taken for a clock that was never set. */
const EARLIEST = Date.UTC(2000, 0, 1);
/** Sensor and server clocks drift; a reading this far ahead of now is still taken. */
const FUTURE_SLACK_MS = 5 * 60_000;

const columnOf = (header: string) => {
	const h = header
		.toLowerCase()
		.replace(/\(.*?\)|\[.*?\]/g, (unit) => ` ${unit.slice(1, -1)} `)
		.replace(/[₂]/g, '2')
		.replace(/[^a-z0-9]+/g, ' ')
		.trim();
	if (['time', 'timestamp', 'date time', 'datetime', 'at'].includes(h)) return 'time';
	if (['o2 ppm', 'o2', 'oxygen ppm', 'oxygen'].includes(h)) return 'o2';
	if (['h2o ppm', 'h2o', 'water ppm', 'moisture ppm', 'water', 'moisture'].includes(h))
		return 'h2o';
	return null;
};

const realDate = (y: number, mo: number, d: number) => {
	const back = new Date(Date.UTC(y, mo - 1, d));
	return back.getUTCFullYear() === y && back.getUTCMonth() === mo - 1 && back.getUTCDate() === d;
};

/** Bytes that no CSV text holds: NUL, or a UTF-8 decoder's replacement character. */
export function looksBinary(text: string): boolean {
	return text.includes('\u0000') || text.includes('\uFFFD');
}

const FORMATS = ['yyyy-MM-dd HH:mm:ss', 'yyyy-MM-dd HH:mm', 'yyyy-MM-dd HH:mm:ss.SSS'];
const WITH_OFFSET =
	/^(\d{4}-\d{2}-\d{2})[T ](\d{2}:\d{2}(?::\d{2}(?:\.\d{1,9})?)?)(Z|[+-]\d{2}(?::?\d{2})?)$/i;
const LOCAL = /^(\d{4})-(\d{2})-(\d{2})[T ](\d{2}):(\d{2})(?::(\d{2})(?:\.(\d{1,3})\d*)?)?$/;

/**
 * A parser for one log: the common shapes are read without luxon (a sensor log has tens of
 * thousands of rows). Local times take the zone's offset from a cache per hour; an hour in
 * which the offset changes (a clock change) is worked out minute by minute with luxon.
 */
export function timeParser(tz: string): (value: string) => Date | string {
	const hours = new Map<string, number | null>();
	const offsetOfHour = (y: number, mo: number, d: number, h: number): number | null => {
		const key = `${y}-${mo}-${d}-${h}`;
		let offset = hours.get(key);
		if (offset === undefined) {
			const start = DateTime.fromObject({ year: y, month: mo, day: d, hour: h }, { zone: tz });
			const end = start.set({ minute: 59 });
			// An hour the clocks pass twice (when they go back) is left to the slow path too.
			const repeats = start.plus({ hours: 1 }).hour === h || start.minus({ hours: 1 }).hour === h;
			const whole =
				start.isValid &&
				start.hour === h &&
				end.hour === h &&
				start.offset === end.offset &&
				!repeats;
			offset = whole ? start.offset : null;
			hours.set(key, offset);
		}
		return offset;
	};
	return (value) => {
		const text = value.trim();
		const zoned = WITH_OFFSET.exec(text);
		if (zoned) {
			const zone =
				zoned[3].toUpperCase() === 'Z'
					? 'Z'
					: zoned[3].replace(/^([+-]\d{2}):?(\d{2})?$/, (_, h, m) => `${h}:${m ?? '00'}`);
			const [y, mo, d] = zoned[1].split('-').map(Number);
			// Date.parse rolls 30 February over into March; such a date is no date.
			const ms = realDate(y, mo, d) ? Date.parse(`${zoned[1]}T${zoned[2]}${zone}`) : Number.NaN;
			if (!Number.isNaN(ms)) return new Date(ms);
		}
		const local = LOCAL.exec(text);
		if (local) {
			const [y, mo, d, h, mi] = local.slice(1, 6).map(Number);
			const [se, ms] = [Number(local[6] ?? 0), Number((local[7] ?? '0').padEnd(3, '0'))];
			const offset = offsetOfHour(y, mo, d, h);
			const utc = Date.UTC(y, mo - 1, d, h, mi, se, ms);
			if (offset !== null && realDate(y, mo, d) && h < 24 && mi < 60 && se < 60)
				return new Date(utc - offset * 60_000);
		}
		return parseTime(text, tz);
	};
}

/** The instant a log's time names, or a reason it names none (the slow, general path). */
export function parseTime(value: string, tz: string): Date | string {
	const text = value.trim();
	if (!text) return 'the time is empty';
	// RFC 3339 allows a space between the date and the time; ISO 8601 wants a T.
	let dt = DateTime.fromISO(text.replace(/^(\d{4}-\d{2}-\d{2}) /, '$1T'), {
		zone: tz,
		setZone: false
	});
	for (const format of FORMATS) {
		if (dt.isValid) break;
		dt = DateTime.fromFormat(text, format, { zone: tz });
	}
	if (!dt.isValid)
		return `"${text.slice(0, 40)}" is not a time (use ISO 8601, e.g. 2026-11-30T14:05:00Z)`;
	const hasOffset = /(?:Z|[+-]\d{2}:?\d{2})$/i.test(text);
	if (!hasOffset) {
		// A wall-clock time skipped when the clocks went forward names no instant.
		const back = dt.setZone(tz);
		const wall = text.replace('T', ' ').slice(0, 16);
		if (back.toFormat('yyyy-MM-dd HH:mm') !== wall)
			return `${text} does not exist on the facility's clock (the clocks went forward)`;
		// When the clocks go back an hour is passed twice: without an offset it names two instants.
		const stamp = (t: DateTime) => t.toFormat('yyyy-MM-dd HH:mm');
		if (stamp(back.plus({ hours: 1 })) === wall || stamp(back.minus({ hours: 1 })) === wall)
			return `${text} happens twice on the facility's clock (the clocks went back); give it with its offset`;
	}
	return dt.toJSDate();
}

const numberOf = (value: string): number => {
	const text = value.trim();
	return text === '' || !/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(text)
		? Number.NaN
		: Number(text);
};

/** Parses and checks a whole log; nothing is stored here. */
export function parseReadingsCsv(text: string, opts: { tz: string; now: Date }): ParsedCsv {
	if (looksBinary(text)) return { ok: false, message: 'That file is not a CSV text file.' };
	const body = text.replace(/^\uFEFF/, '');
	const parsed = Papa.parse<string[]>(body, {
		skipEmptyLines: false,
		delimitersToGuess: [',', ';', '\t']
	});
	const [header, ...lines] = parsed.data;
	if (!header || header.every((h) => !h.trim()))
		return {
			ok: false,
			message: 'The file is empty: it needs a header line with time, O2 ppm and H2O ppm.'
		};
	const columns = header.map(columnOf);
	const at = columns.indexOf('time');
	const o2 = columns.indexOf('o2');
	const h2o = columns.indexOf('h2o');
	if (at < 0 || o2 < 0 || h2o < 0) {
		return {
			ok: false,
			message: `The header line must name the columns time, O2 ppm and H2O ppm; this file's header is "${header.join(',').slice(0, 120)}".`
		};
	}
	const latest = opts.now.getTime() + FUTURE_SLACK_MS;
	const rows: CsvReading[] = [];
	const rejected: Rejected[] = [];
	const seen = new Set<number>();
	const timeOf = timeParser(opts.tz);
	let duplicatesInFile = 0;
	lines.forEach((cells, i) => {
		const line = i + 2;
		if (cells.length === 1 && cells[0].trim() === '') return;
		if (cells.length < header.length) {
			rejected.push({ line, reason: `expected ${header.length} columns, found ${cells.length}` });
			return;
		}
		const when = timeOf(cells[at]);
		if (typeof when === 'string') return void rejected.push({ line, reason: when });
		if (when.getTime() > latest)
			return void rejected.push({ line, reason: 'the time is in the future' });
		if (when.getTime() < EARLIEST)
			return void rejected.push({ line, reason: 'the time is before the year 2000' });
		const reading = { o2Ppm: numberOf(cells[o2]), h2oPpm: numberOf(cells[h2o]) };
		const problems = Object.values(checkReading(reading));
		if (problems.length) return void rejected.push({ line, reason: problems.join(' ') });
		// The database keeps one reading per box and second.
		const second = Math.floor(when.getTime() / 1000);
		if (seen.has(second)) return void duplicatesInFile++;
		seen.add(second);
		rows.push({ line, at: new Date(second * 1000), ...reading });
	});
	return { ok: true, rows, rejected, duplicatesInFile };
}
