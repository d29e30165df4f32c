// A box's readings as CSV: one line per reading, times on the facility's clock with its
// offset, so a spreadsheet anywhere reads the same instants.
import { DateTime, IANAZone } from 'luxon';
// RFC 4180 quoting with spreadsheet formulas defused, as the statements do.
import { field as csvField } from './usage';

export const READINGS_CSV_HEADER = 'time,o2_ppm,h2o_ppm,source,note';

export type ExportRow = {
	at: Date;
	o2Ppm: number;
	h2oPpm: number;
	source: string;
	note: string | null;
};

const two = (n: number) => String(n).padStart(2, '0');

/**
 * Writes instants as ISO 8601 in `tz` with its offset ("2026-03-29T03:00:00+02:00"),
 * to the second (readings are stored so). luxon per row is ~10 µs, too slow for a
 * year of minute readings, so the zone's offset is looked up once per hour and per row
 * only within an hour that holds a change of offset.
 */
export function zoneStamper(tz: string): (at: Date) => string {
	const zone = IANAZone.create(tz);
	if (!zone.isValid) throw new Error(`Unknown time zone “${tz}”.`);
	let hour = NaN;
	let steady: number | null = null;
	return (at) => {
		const ms = at.getTime();
		const h = Math.floor(ms / 3_600_000);
		if (h !== hour) {
			hour = h;
			const first = zone.offset(h * 3_600_000);
			steady = first === zone.offset(h * 3_600_000 + 3_599_999) ? first : null;
		}
		const offset = steady ?? zone.offset(ms);
		const local = new Date(ms + offset * 60_000).toISOString().slice(0, 19);
		const a = Math.abs(offset);
		return `${local}${offset < 0 ? '-' : '+'}${two(Math.floor(a / 60))}:${two(a % 60)}`;
	};
}

/** One line (with its line break) of the export. */
export function readingCsvLine(row: ExportRow, stamp: (at: Date) => string): string {
	return `${stamp(row.at)},${row.o2Ppm},${row.h2oPpm},${row.source},${row.note ? csvField(row.note) : ''}\r\n`;
}

/**
 * "Heron-readings-2026-11-01-to-2026-11-30.csv": the box and the days covered, on the
 * facility's clock; the end is exclusive, so a range to midnight ends the day before.
 */
export function exportFilename(boxName: string, from: Date, to: Date, tz: string): string {
	const name = boxName.replace(/[^A-Za-z0-9]+/g, '-').replace(/^-|-$/g, '') || 'box';
	const day = (at: Date) => DateTime.fromJSDate(at, { zone: tz }).toISODate();
	const last = new Date(Math.max(from.getTime(), to.getTime() - 1));
	return `${name}-readings-${day(from)}-to-${day(last)}.csv`;
}
