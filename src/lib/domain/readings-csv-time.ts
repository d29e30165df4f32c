// The times of a sensor's log: ISO 8601, yyyy-mm-dd, dd.mm.yyyy, dd/mm/yyyy (or mm/dd/yyyy)
// and dd-mm-yyyy with the time of day; a time without an offset is on the facility's clock,
// where a time the clocks skip is refused and one they pass twice needs its offset. Part of
// the one rule set of readings-csv.ts.
import { DateTime } from 'luxon';

export type DateFormat =
	| 'iso-offset'
	| 'iso-local'
	| 'ymd'
	| 'dmy-dot'
	| 'dmy-slash'
	| 'mdy-slash'
	| 'dmy-dash'
	| 'iso-other';
export const DATE_FORMAT_NAMES: Record<DateFormat, string> = {
	'iso-offset': 'ISO 8601 with offset (2026-11-30T14:05:00+01:00)',
	'iso-local': 'ISO 8601 without offset (2026-11-30T14:05:00)',
	ymd: 'yyyy-mm-dd hh:mm[:ss]',
	'dmy-dot': 'dd.mm.yyyy hh:mm[:ss]',
	'dmy-slash': 'dd/mm/yyyy hh:mm[:ss]',
	'mdy-slash': 'mm/dd/yyyy hh:mm[:ss]',
	'dmy-dash': 'dd-mm-yyyy hh:mm[:ss]',
	'iso-other': 'ISO 8601'
};

const realDate = (y: number, mo: number, d: number) => {
	const back = new Date(Date.UTC(y, mo - 1, d));
	return back.getUTCFullYear() === y && back.getUTCMonth() === mo - 1 && back.getUTCDate() === d;
};

const CLOCK = String.raw`(\d{1,2}):(\d{2})(?::(\d{2})(?:[.,](\d{1,9}))?)?`;
const WITH_OFFSET =
	/^(\d{4}-\d{2}-\d{2})[T ](\d{2}:\d{2}(?::\d{2}(?:\.\d{1,9})?)?)(Z|[+-]\d{2}(?::?\d{2})?)$/i;
const ISO_LOCAL = new RegExp(String.raw`^(\d{4})-(\d{2})-(\d{2})([T ])${CLOCK}$`);
const DAY_FIRST = new RegExp(String.raw`^(\d{1,2})([./-])(\d{1,2})\2(\d{4}),?[ T]+${CLOCK}$`);
/** What a time cell looks like, loosely: a date, then a time of day. */
export const TIME_SHAPE =
	/^\s*(\d{4}-\d{1,2}-\d{1,2}|\d{1,2}[./-]\d{1,2}[./-]\d{4})[T ,]+\d{1,2}:\d{2}/;
export const DATE_SHAPE = /^\s*(\d{4}-\d{1,2}-\d{1,2}|\d{1,2}[./-]\d{1,2}[./-]\d{4})\s*$/;
export const CLOCK_SHAPE = /^\s*\d{1,2}:\d{2}(:\d{2}([.,]\d+)?)?\s*$/;
const HAS_OFFSET = /(?:Z|[+-]\d{2}(?::?\d{2})?)$/i;

const EXAMPLES = '(e.g. 2026-11-30 14:05, 30.11.2026 14:05 or 2026-11-30T14:05:00Z)';
const NOT_A_TIME = `is not a date and time this import reads ${EXAMPLES}`;
const NO_SUCH_TIME = 'is not a real date and time';
const SKIPPED = "does not exist on the facility's clock (the clocks went forward)";
const TWICE =
	"happens twice on the facility's clock (the clocks went back); give it with its offset, e.g. 2026-10-25T02:30:00+01:00";

export type ReadTime = { at: Date; format: DateFormat; local: boolean };

/**
 * A reader of one log's times: an instant with the format it was written in, or the end of
 * a sentence saying why the text names none ("… is not a real date and time"). The common
 * shapes are read without luxon (a log has tens of thousands of rows): local times take the
 * zone's offset from a cache per hour, and an hour in which the offset changes (a clock
 * change) is worked out with luxon. `slashOrder` says how dd/mm/yyyy dates are read.
 */
export function timeReader(
	tz: string,
	slashOrder: 'dmy' | 'mdy' = 'dmy'
): (value: string) => ReadTime | string {
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
	const onClock = (
		[y, mo, d, h, mi, s]: number[],
		fraction: string | undefined,
		format: DateFormat
	): ReadTime | string => {
		if (!realDate(y, mo, d) || h > 23 || mi > 59 || s > 59) return NO_SUCH_TIME;
		const ms = fraction ? Number(fraction.slice(0, 3).padEnd(3, '0')) : 0;
		const offset = offsetOfHour(y, mo, d, h);
		if (offset !== null)
			return {
				at: new Date(Date.UTC(y, mo - 1, d, h, mi, s, ms) - offset * 60_000),
				format,
				local: true
			};
		const wall = { year: y, month: mo, day: d, hour: h, minute: mi, second: s, millisecond: ms };
		const dt = DateTime.fromObject(wall, { zone: tz });
		if (!dt.isValid) return NO_SUCH_TIME;
		// A wall-clock time skipped when the clocks went forward names no instant.
		if (dt.day !== d || dt.hour !== h || dt.minute !== mi) return SKIPPED;
		// When the clocks go back an hour is passed twice: without an offset it names two instants.
		const same = (t: DateTime) => t.day === d && t.hour === h && t.minute === mi;
		if (same(dt.plus({ hours: 1 })) || same(dt.minus({ hours: 1 }))) return TWICE;
		return { at: dt.toJSDate(), format, local: true };
	};
	return (value) => {
		const text = value.trim();
		if (!text) return 'is empty';
		const zoned = WITH_OFFSET.exec(text);
		if (zoned) {
			const zone =
				zoned[3].toUpperCase() === 'Z'
					? 'Z'
					: zoned[3].replace(/^([+-]\d{2}):?(\d{2})?$/, (_, h, m) => `${h}:${m ?? '00'}`);
			const [y, mo, d] = zoned[1].split('-').map(Number);
			// Date.parse rolls 30 February over into March; such a date is no date.
			if (!realDate(y, mo, d)) return NO_SUCH_TIME;
			const ms = Date.parse(`${zoned[1]}T${zoned[2]}${zone}`);
			if (!Number.isNaN(ms)) return { at: new Date(ms), format: 'iso-offset', local: false };
			return NO_SUCH_TIME;
		}
		const iso = ISO_LOCAL.exec(text);
		if (iso) {
			const [y, mo, d] = [iso[1], iso[2], iso[3]].map(Number);
			const clock = [iso[5], iso[6], iso[7] ?? '0'].map(Number);
			return onClock([y, mo, d, ...clock], iso[8], iso[4] === 'T' ? 'iso-local' : 'ymd');
		}
		const dayFirst = DAY_FIRST.exec(text);
		if (dayFirst) {
			const [a, b, y] = [dayFirst[1], dayFirst[3], dayFirst[4]].map(Number);
			const clock = [dayFirst[5], dayFirst[6], dayFirst[7] ?? '0'].map(Number);
			const sep = dayFirst[2];
			const mdy = sep === '/' && slashOrder === 'mdy';
			const format: DateFormat =
				sep === '.' ? 'dmy-dot' : sep === '-' ? 'dmy-dash' : mdy ? 'mdy-slash' : 'dmy-slash';
			return onClock(mdy ? [y, a, b, ...clock] : [y, b, a, ...clock], dayFirst[8], format);
		}
		// Other ISO 8601 forms (basic format, week dates …) through luxon; a date alone is no time.
		if (!text.includes('T')) return NOT_A_TIME;
		const other = DateTime.fromISO(text, { zone: 'UTC', setZone: true });
		if (!other.isValid) return NOT_A_TIME;
		if (HAS_OFFSET.test(text)) return { at: other.toJSDate(), format: 'iso-other', local: false };
		const { year, month, day, hour, minute, second, millisecond } = other;
		return onClock(
			[year, month, day, hour, minute, second],
			String(millisecond).padStart(3, '0'),
			'iso-other'
		);
	};
}
