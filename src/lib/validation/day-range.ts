// `?from=&to=` of a list filtered by day (a box's readings): whole days on the facility's
// clock, either end optional. The chart's range (reading-range.ts) defaults to the last week;
// a list without dates shows everything.
import { DateTime } from 'luxon';
import { z } from 'zod';
import { fieldErrors } from './fields';

const day = (which: string) =>
	z.iso.date({ error: `Give the ${which} day as a date, e.g. 2026-12-01.` }).optional();

export const dayRangeSchema = z.object({ from: day('first'), to: day('last') });

export type DayRange = {
	/** The days as given (YYYY-MM-DD, '' when none), for the form to show again. */
	values: { from: string; to: string };
	/** The start of the first day; none when not given or not valid. */
	since?: Date;
	/** The midnight after the last day (excluded); none when not given or not valid. */
	until?: Date;
	/** A message per field that could not be read (or runs backwards); that end is left open. */
	errors: Record<string, string>;
};

/** Reads `from` and `to` (with the list's prefix) as whole days in `tz`. */
export function readDayRange(params: URLSearchParams, tz: string, prefix = ''): DayRange {
	const p = prefix ? `${prefix}.` : '';
	const values = {
		from: params.get(`${p}from`)?.trim() ?? '',
		to: params.get(`${p}to`)?.trim() ?? ''
	};
	const parsed = dayRangeSchema.safeParse({
		from: values.from || undefined,
		to: values.to || undefined
	});
	// A day that cannot be read leaves its end open; the other end still applies.
	const errors: Record<string, string> = parsed.success ? {} : fieldErrors(parsed.error);
	const from = errors.from ? undefined : values.from || undefined;
	let to = errors.to ? undefined : values.to || undefined;
	if (from && to && to < from) {
		errors.to = 'The last day is before the first.';
		to = undefined;
	}
	const start = (d: string) => DateTime.fromISO(d, { zone: tz }).startOf('day');
	return {
		values,
		since: from ? start(from).toJSDate() : undefined,
		until: to ? start(to).plus({ days: 1 }).startOf('day').toJSDate() : undefined,
		errors
	};
}
