// `?from=&to=` of the readings chart and the readings export: one way to read a range.
import { DateTime } from 'luxon';
import { z } from 'zod';
import { fieldErrors } from './fields';

const instant = (field: string) =>
	z.union([z.iso.datetime({ offset: true }), z.iso.date()], {
		error: `Give ${field} as a date (2026-12-01) or an ISO 8601 date-time with an offset (2026-12-01T09:00:00+01:00).`
	});

export const readingRangeSchema = z.object({
	from: instant('from').optional(),
	to: instant('to').optional()
});

/** When neither end is given: the last seven days. */
const DEFAULT_DAYS = 7;

export type ReadingRange =
	| { ok: true; from: Date; to: Date }
	| { ok: false; message: string; fields: Record<string, string> };

/**
 * Reads a range. A date alone is a whole day on the facility's clock: `from` its start,
 * `to` its end, so `from=2026-11-01&to=2026-11-30` is all of November. The range is
 * [from, to). Missing ends: to = now, from = `defaultFrom`, else seven days before to.
 */
export function readReadingRange(
	params: URLSearchParams,
	tz: string,
	opts: { now?: Date; maxDays?: number; defaultFrom?: Date } = {}
): ReadingRange {
	const parsed = readingRangeSchema.safeParse({
		from: params.get('from') || undefined,
		to: params.get('to') || undefined
	});
	if (!parsed.success)
		return { ok: false, message: 'That range is not valid.', fields: fieldErrors(parsed.error) };
	const at = (value: string, end: boolean) => {
		if (value.includes('T')) return new Date(value);
		const day = DateTime.fromISO(value, { zone: tz }).startOf('day');
		return (end ? day.plus({ days: 1 }).startOf('day') : day).toJSDate();
	};
	const to = parsed.data.to ? at(parsed.data.to, true) : (opts.now ?? new Date());
	const from = parsed.data.from
		? at(parsed.data.from, false)
		: (opts.defaultFrom ?? new Date(to.getTime() - DEFAULT_DAYS * 86_400_000));
	if (Number.isNaN(from.getTime()) || Number.isNaN(to.getTime()))
		return {
			ok: false,
			message: 'That range is not valid.',
			fields: Number.isNaN(from.getTime())
				? { from: 'That date does not exist.' }
				: { to: 'That date does not exist.' }
		};
	if (to <= from)
		return {
			ok: false,
			message: 'That range is empty.',
			fields: { to: 'The end must be after the start.' }
		};
	if (opts.maxDays && to.getTime() - from.getTime() > opts.maxDays * 86_400_000)
		return {
			ok: false,
			message: `Chart at most ${opts.maxDays} days at a time.`,
			fields: { from: 'That range is too long.' }
		};
	return { ok: true, from, to };
}
