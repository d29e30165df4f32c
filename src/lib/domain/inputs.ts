// What the calculations (humidity, antechamber, flush, leak) share: the shape of a refused
// input, the units read off the instruments, and the physical bounds every absolute pressure
// is held to. Pure, for the API routes, the forms and the /calc page alike.

/**
 * One refused input. `field` is the input's name as the API takes it (SI units: p1Pa, t1K,
 * hours); `message` is a sentence that names the field the same way, so an API client and a
 * person at a form read the same words.
 */
export type Problem<F extends string = string> = { field: F; message: string };

/**
 * Field → message (the first problem for each field), the `details.fields` of the API's 400
 * and the messages a form shows beside its inputs. `rename` maps a domain field to the name
 * of the input that fed it where a form works in other units (t1K → t1C).
 */
export function fieldMessages(
	problems: readonly Problem[],
	rename: Readonly<Record<string, string>> = {}
): Record<string, string> {
	const fields: Record<string, string> = {};
	for (const { field, message } of problems) fields[rename[field] ?? field] ??= message;
	return fields;
}

/** Pascals in a millibar (hectopascal), the unit of box gauges and barometers. */
export const PA_PER_MBAR = 100;
/** 0 °C in kelvin. */
export const KELVIN_OFFSET = 273.15;

/**
 * Absolute pressures of a box's gas, a refilled antechamber or a barometer: 1 kPa (10 mbar)
 * to 1 MPa (10 bar). Below 1 kPa is a vacuum, not a gas anyone works in; above 10 bar the
 * ideal-gas forms here (and any glove box) stop making sense. Bounds of plausibility, not of
 * physics: they catch unit slips (kPa for Pa, mbar for Pa).
 */
export const MIN_ABSOLUTE_PA = 1_000;
export const MAX_ABSOLUTE_PA = 1_000_000;

/** The problem with an absolute pressure, if any. */
export function absolutePressureProblem<F extends string>(field: F, pa: number): Problem<F> | null {
	if (!Number.isFinite(pa)) return { field, message: `${field} must be a number` };
	if (pa < MIN_ABSOLUTE_PA || pa > MAX_ABSOLUTE_PA)
		return {
			field,
			message: `${field} must be an absolute pressure from 1 kPa to 1 MPa (10 to 10 000 mbar)`
		};
	return null;
}

/**
 * A number as a person types it into a text field: a decimal comma is taken for a point, and
 * an empty field (or anything that is not a number) is NaN, which the checks refuse by name.
 */
export function numberFromText(text: string | null | undefined): number {
	const t = (text ?? '').trim().replace(',', '.');
	return t === '' ? Number.NaN : Number(t);
}
