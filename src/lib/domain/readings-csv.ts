// A sensor's log as it comes out of the sensor or a spreadsheet: columns separated by
// commas, semicolons or tabs (the first line says which; Excel's "sep=;" line is obeyed),
// decimal commas in files not separated by commas, a header naming the time, O2 and H2O
// columns in any of the common languages (with a unit in brackets), or no header and the
// columns in that order. Times are ISO 8601, yyyy-mm-dd, dd.mm.yyyy, dd/mm/yyyy (mm/dd/yyyy
// when the file shows it) or dd-mm-yyyy with the time of day, in one column or a date and a
// time column; a time without an offset is on the facility's clock.
//
// One rule set: the import endpoint, its preview and the box page all go through
// parseReadingsCsv. Every refusal quotes the file's own words.
import Papa from 'papaparse';
import { checkReading } from './atmosphere';
import { columnsOfHeader, quote } from './readings-csv-header';
import {
	CLOCK_SHAPE,
	DATE_FORMAT_NAMES,
	DATE_SHAPE,
	TIME_SHAPE,
	timeReader,
	type DateFormat
} from './readings-csv-time';
import { local } from './time';

export { DATE_FORMAT_NAMES, timeReader, type DateFormat, type ReadTime } from './readings-csv-time';

export type CsvReading = { line: number; at: Date; o2Ppm: number; h2oPpm: number };
export type Rejected = { line: number; reason: string };

export type Separator = ',' | ';' | '\t';
/** A column of the file: its position (0-based) and its name, as the header writes it. */
export type Column = { index: number; name: string };
export type CsvLayout = {
	separator: Separator;
	decimalMark: '.' | ',';
	/** False when the first line is already a reading and the columns are taken by position. */
	header: boolean;
	/** `date` is set when the date and the time of day are separate columns. */
	columns: { time: Column; date?: Column; o2: Column; h2o: Column };
};
/** One of the first rows, as the file wrote it and as it was read. */
export type SampleRow = {
	line: number;
	cells: { time: string; o2: string; h2o: string };
	at: Date;
	o2Ppm: number;
	h2oPpm: number;
};
export type ParsedCsv =
	| {
			ok: true;
			rows: CsvReading[];
			rejected: Rejected[];
			duplicatesInFile: number;
			layout: CsvLayout;
			/** Lines that hold a row (blank lines left out). */
			lines: number;
			/** The date formats met, in the order they first appeared. */
			dateFormats: DateFormat[];
			/** Whether some times carry no offset (and so were read on the facility's clock). */
			localTimes: boolean;
			sample: SampleRow[];
	  }
	| { ok: false; message: string };

/** Larger files are refused before parsing (a year of one reading a minute is about 20 MB). */
export const MAX_CSV_BYTES = 25 * 1024 * 1024;
/** A report lists this many rejected rows and counts the rest. */
export const MAX_REJECTED_LISTED = 200;
/** The preview shows this many rows as read. */
export const PREVIEW_ROWS = 5;
/** Readings before this are taken for a clock that was never set. */
const EARLIEST = Date.UTC(2000, 0, 1);
/** Sensor and server clocks drift; a reading this far ahead of now is still taken. */
const FUTURE_SLACK_MS = 5 * 60_000;

export const SEPARATOR_NAMES: Record<Separator, string> = {
	',': 'comma',
	';': 'semicolon',
	'\t': 'tab'
};

/** Bytes that no CSV text holds: NUL, or a UTF-8 decoder's replacement character. */
export function looksBinary(text: string): boolean {
	return text.includes('\u0000') || text.includes('\uFFFD');
}

/** The instant a time names, or why it names none. */
export function parseTime(value: string, tz: string): Date | string {
	const read = timeReader(tz)(value);
	return typeof read === 'string' ? `${quote(value.trim())} ${read}` : read.at;
}

// ---------------------------------------------------------------------------------------
// Numbers

const POINT_NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;
const COMMA_NUMBER = /^[+-]?(\d+,?\d*|,\d+)([eE][+-]?\d+)?$/;

/** A cell as a number with the file's decimal mark, or why it is none. */
function numberOf(text: string, mark: '.' | ',', separator: Separator): number | string {
	if (mark === ',' ? COMMA_NUMBER.test(text) : POINT_NUMBER.test(text))
		return Number(mark === ',' ? text.replace(',', '.') : text);
	if (mark === '.' && COMMA_NUMBER.test(text))
		return separator === ','
			? 'which has a decimal comma: in a file separated by commas write decimal points (0.45), or separate the columns with semicolons'
			: "which has a decimal comma, but this file's other numbers use decimal points";
	if (mark === ',' && POINT_NUMBER.test(text))
		return "which has a decimal point, but this file's other numbers use decimal commas";
	return 'which is not a number';
}

// ---------------------------------------------------------------------------------------
// The file

/** The lines of a text, without their ends, up to `max` of them. */
function firstLines(text: string, max: number): string[] {
	const lines: string[] = [];
	let from = 0;
	while (lines.length < max && from <= text.length) {
		const end = text.slice(from).search(/\r\n|\n|\r/);
		if (end < 0) {
			lines.push(text.slice(from));
			break;
		}
		lines.push(text.slice(from, from + end));
		from += end + (text.startsWith('\r\n', from + end) ? 2 : 1);
	}
	return lines;
}

/** Tab if the line has one, else semicolon, else comma (quoted text left out). */
function separatorOf(line: string): Separator {
	const bare = line.replace(/"[^"]*"/g, '');
	return bare.includes('\t') ? '\t' : bare.includes(';') ? ';' : ',';
}

const blank = (cells: string[]) => cells.every((c) => c.trim() === '');

/** Parses and checks a whole log; nothing is stored here. */
export function parseReadingsCsv(text: string, opts: { tz: string; now: Date }): ParsedCsv {
	if (looksBinary(text)) return { ok: false, message: 'That file is not a CSV text file.' };
	let body = text.replace(/^\uFEFF/, '');
	let skipped = 0;
	let separator: Separator | undefined;
	// Spreadsheets write "sep=;" as the first line to say which separator follows.
	const hint = /^sep=(.)$/i.exec(firstLines(body, 1)[0] ?? '');
	if (hint) {
		if (![',', ';', '\t'].includes(hint[1]))
			return {
				ok: false,
				message: `The file's first line ${quote(hint[0])} names a separator this import does not read; use comma, semicolon or tab.`
			};
		separator = hint[1] as Separator;
		body = body.slice(hint[0].length).replace(/^\r?\n|^\r/, '');
		skipped = 1;
	}
	const head = firstLines(body, 50);
	const firstIndex = head.findIndex((l) => l.trim() !== '');
	if (firstIndex < 0)
		return {
			ok: false,
			message: 'The file is empty: it needs a line per reading with the time, O2 ppm and H2O ppm.'
		};
	separator ??= separatorOf(head[firstIndex]);
	const data = Papa.parse<string[]>(body, { delimiter: separator, skipEmptyLines: false }).data;
	const start = data.findIndex((cells) => !blank(cells));
	if (start < 0)
		return {
			ok: false,
			message: 'The file is empty: it needs a line per reading with the time, O2 ppm and H2O ppm.'
		};
	const first = data[start];
	const lineOf = (i: number) => i + 1 + skipped;

	// A first line that begins with a time is a reading: the columns go by position.
	let columns: CsvLayout['columns'];
	let width: number;
	const header = !(
		TIME_SHAPE.test(first[0]) ||
		(DATE_SHAPE.test(first[0]) && CLOCK_SHAPE.test(first[1] ?? ''))
	);
	if (header) {
		const found = columnsOfHeader(first, head[firstIndex]);
		if (!found.ok) return found;
		columns = found.columns;
		width = first.length;
	} else {
		const split = !TIME_SHAPE.test(first[0]);
		const at = (index: number, role: string): Column => ({
			index,
			name: `column ${index + 1} (${role})`
		});
		columns = split
			? { date: at(0, 'date'), time: at(1, 'time'), o2: at(2, 'O2'), h2o: at(3, 'H2O') }
			: { time: at(0, 'time'), o2: at(1, 'O2'), h2o: at(2, 'H2O') };
		width = split ? 4 : 3;
		if (first.filter((c) => c.trim() !== '').length > width)
			return {
				ok: false,
				message:
					separator === ','
						? `The first line ${quote(head[firstIndex])} has ${first.length} columns separated by commas, where the time, O2 and H2O make ${width}: a file separated by commas cannot use decimal commas. Write decimal points (0.45), or separate the columns with semicolons.`
						: `The first line ${quote(head[firstIndex])} has no header and ${first.length} columns; with more than the time, O2 and H2O, give the file a header line naming them.`
			};
	}
	const rowsFrom = header ? start + 1 : start;
	/** A row may leave off the header's unused last columns, not the ones read. */
	const needed = 1 + Math.max(...Object.values(columns).map((c) => c.index));

	// A file separated by commas and written with decimal commas has more cells than columns.
	if (header && separator === ',') {
		const next = data.slice(rowsFrom).findIndex((cells) => !blank(cells));
		const cells = next < 0 ? [] : data[rowsFrom + next];
		if (cells.length > width && cells.slice(width).some((c) => c.trim() !== '')) {
			const [raw] = firstLines(body, rowsFrom + next + 1).slice(-1);
			return {
				ok: false,
				message: `Line ${lineOf(rowsFrom + next)}, ${quote(raw)}, has ${cells.length} values where the header ${quote(head[firstIndex])} names ${width} columns: a file separated by commas cannot use decimal commas. Write decimal points (0.45), or separate the columns with semicolons.`
			};
		}
	}

	// The decimal mark: a point in files separated by commas, else as the first decimal shows.
	let decimalMark: '.' | ',' = '.';
	if (separator !== ',')
		for (let i = rowsFrom; i < data.length; i++) {
			const cells = data[i];
			const mark = [cells[columns.o2.index], cells[columns.h2o.index]]
				.map((c) => (c ?? '').match(/[.,]/)?.[0])
				.find(Boolean);
			if (mark) {
				decimalMark = mark as '.' | ',';
				break;
			}
		}

	// dd/mm/yyyy unless a day beyond 12 shows the file writes the month first.
	const timeText = (cells: string[]) =>
		columns.date
			? `${(cells[columns.date.index] ?? '').trim()} ${(cells[columns.time.index] ?? '').trim()}`
			: (cells[columns.time.index] ?? '');
	let dayFirst = false;
	let monthFirst = false;
	for (let i = rowsFrom; i < data.length && !dayFirst; i++) {
		const slash = /^\s*(\d{1,2})\/(\d{1,2})\//.exec(timeText(data[i]));
		if (slash) {
			dayFirst ||= Number(slash[1]) > 12;
			monthFirst ||= Number(slash[2]) > 12;
		}
	}
	const read = timeReader(opts.tz, monthFirst && !dayFirst ? 'mdy' : 'dmy');

	const latest = opts.now.getTime() + FUTURE_SLACK_MS;
	const rows: CsvReading[] = [];
	const rejected: Rejected[] = [];
	const sample: SampleRow[] = [];
	const seen = new Set<number>();
	const formats = new Set<DateFormat>();
	const timeName = columns.date
		? `${quote(columns.date.name)} and ${quote(columns.time.name)}`
		: quote(columns.time.name);
	const timeLabel = columns.date ? `columns ${timeName} hold` : `column ${timeName} holds`;
	/** A cell's number, or the reason it is none (the rest of the refusal). */
	const valueOf = (cells: string[], column: Column): number | string => {
		const raw = (cells[column.index] ?? '').trim();
		if (!raw) return `column ${quote(column.name)} is empty`;
		const n = numberOf(raw, decimalMark, separator);
		return typeof n === 'string' ? `column ${quote(column.name)} holds ${quote(raw)}, ${n}` : n;
	};
	let localTimes = false;
	let duplicatesInFile = 0;
	let lines = 0;
	for (let i = rowsFrom; i < data.length; i++) {
		const cells = data[i];
		if (blank(cells)) continue;
		lines++;
		const line = lineOf(i);
		if (
			cells.length < needed ||
			(cells.length > width && cells.slice(width).some((c) => c.trim() !== ''))
		) {
			const hint =
				cells.length > width && separator === ','
					? ' (a file separated by commas cannot use decimal commas)'
					: '';
			rejected.push({ line, reason: `expected ${width} columns, found ${cells.length}${hint}` });
			continue;
		}
		const rawTime = timeText(cells).trim();
		const when = read(rawTime);
		const late = typeof when === 'string' ? null : when.at.getTime();
		if (typeof when === 'string' || late! > latest || late! < EARLIEST) {
			const which =
				typeof when === 'string'
					? when
					: late! > latest
						? 'is in the future'
						: 'is before the year 2000';
			const reason = rawTime
				? `${timeLabel} ${quote(rawTime)}, which ${which}`
				: `${timeLabel} nothing`;
			rejected.push({ line, reason });
			continue;
		}
		const o2Ppm = valueOf(cells, columns.o2);
		if (typeof o2Ppm === 'string') {
			rejected.push({ line, reason: o2Ppm });
			continue;
		}
		const h2oPpm = valueOf(cells, columns.h2o);
		if (typeof h2oPpm === 'string') {
			rejected.push({ line, reason: h2oPpm });
			continue;
		}
		const problems = checkReading({ o2Ppm, h2oPpm });
		const bad = problems.o2Ppm ? columns.o2 : problems.h2oPpm ? columns.h2o : null;
		if (bad) {
			const raw = cells[bad.index].trim();
			const problem = problems.o2Ppm ?? problems.h2oPpm;
			rejected.push({ line, reason: `column ${quote(bad.name)} holds ${quote(raw)}: ${problem}` });
			continue;
		}
		if (!formats.has(when.format)) formats.add(when.format);
		localTimes ||= when.local;
		// The database keeps one reading per box and second.
		const second = Math.floor(when.at.getTime() / 1000);
		if (seen.has(second)) {
			duplicatesInFile++;
			continue;
		}
		seen.add(second);
		const at = new Date(second * 1000);
		rows.push({ line, at, o2Ppm, h2oPpm });
		if (sample.length < PREVIEW_ROWS)
			sample.push({
				line,
				cells: {
					time: rawTime,
					o2: cells[columns.o2.index].trim(),
					h2o: cells[columns.h2o.index].trim()
				},
				at,
				o2Ppm,
				h2oPpm
			});
	}
	return {
		ok: true,
		rows,
		rejected,
		duplicatesInFile,
		layout: { separator, decimalMark, header, columns },
		lines,
		dateFormats: [...formats],
		localTimes,
		sample
	};
}

// ---------------------------------------------------------------------------------------
// What the preview says

export type ImportPreview = {
	separator: 'comma' | 'semicolon' | 'tab';
	decimalMark: 'point' | 'comma';
	/** False when the columns were taken by position. */
	header: boolean;
	/** The file's own header words (or "column 1 (time)" …). */
	columns: { time: string; date: string | null; o2: string; h2o: string };
	dateFormats: string[];
	/** The zone times without an offset were read in. */
	timeZone: string;
	localTimes: boolean;
	/** Lines holding a row. */
	lines: number;
	/** The first rows as read, with the time on the facility's 24-hour clock. */
	first: {
		line: number;
		cells: { time: string; o2: string; h2o: string };
		at: string;
		shown: string;
		o2Ppm: number;
		h2oPpm: number;
	}[];
};

/** What a parsed log was understood as, for the preview (times shown in `tz`). */
export function previewOf(parsed: Extract<ParsedCsv, { ok: true }>, tz: string): ImportPreview {
	const { layout } = parsed;
	return {
		separator: SEPARATOR_NAMES[layout.separator] as ImportPreview['separator'],
		decimalMark: layout.decimalMark === ',' ? 'comma' : 'point',
		header: layout.header,
		columns: {
			time: layout.columns.time.name,
			date: layout.columns.date?.name ?? null,
			o2: layout.columns.o2.name,
			h2o: layout.columns.h2o.name
		},
		dateFormats: parsed.dateFormats.map((f) => DATE_FORMAT_NAMES[f]),
		timeZone: tz,
		localTimes: parsed.localTimes,
		lines: parsed.lines,
		first: parsed.sample.map((r) => ({
			line: r.line,
			cells: r.cells,
			at: r.at.toISOString(),
			shown: local(r.at, tz).toFormat('ccc d LLL yyyy, HH:mm:ss'),
			o2Ppm: r.o2Ppm,
			h2oPpm: r.h2oPpm
		}))
	};
}
