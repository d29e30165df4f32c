// The /api/calc/* bodies (the leak rate's is in leak-tests.ts, shared with recorded tests).
// The schemas hold the shape (which fields, numbers, whole numbers); the domain checks hold the
// physics (bounds, one field against another) and are what the /calc page runs too, so a value
// is refused with the same words on the page and by the API.
import { z } from 'zod';

/**
 * A strict object: any field it does not name is refused under that field's own name, so
 * `details.fields` says which one. (`z.strictObject` refuses them too, but reports them all
 * under the whole input, with no field to put the message on.) JSON has no `undefined`, so a
 * field that is present at all is refused.
 */
export function strictObject<S extends z.ZodRawShape>(shape: S) {
	return z.object(shape).catchall(z.undefined({ error: 'Not a field of this calculation.' }));
}

/** A finite number; bounds are the domain's to check. */
export const finite = (field: string, unit: string) =>
	z.number({ error: `${field} must be a number of ${unit}.` }).finite();

export const wholeNumber = (field: string) =>
	z.number({ error: `${field} must be a whole number.` }).int(`${field} must be a whole number.`);

/** Frost point ↔ ppmv: give one of the two, and the gas pressure if not one atmosphere. */
export const humidityCalcSchema = strictObject({
	frostPointC: finite('frostPointC', '°C').optional(),
	ppmv: finite('ppmv', 'ppmv').optional(),
	pressurePa: finite('pressurePa', 'pascals').optional()
}).superRefine((v, ctx) => {
	if (v.frostPointC === undefined && v.ppmv === undefined)
		for (const key of ['frostPointC', 'ppmv'])
			ctx.addIssue({ code: 'custom', path: [key], message: 'Give frostPointC or ppmv.' });
	if (v.frostPointC !== undefined && v.ppmv !== undefined)
		ctx.addIssue({
			code: 'custom',
			path: ['ppmv'],
			message: 'Give frostPointC or ppmv, not both.'
		});
});

export const antechamberCalcSchema = strictObject({
	lowPa: finite('lowPa', 'pascals'),
	highPa: finite('highPa', 'pascals'),
	cycles: wholeNumber('cycles').optional(),
	targetPpm: finite('targetPpm', 'ppm').optional(),
	volumeL: finite('volumeL', 'litres').optional(),
	pumpM3PerH: finite('pumpM3PerH', 'm³/h').optional()
});

export const flushCalcSchema = strictObject({
	boxVolumeL: finite('boxVolumeL', 'litres'),
	gloveVolumeL: finite('gloveVolumeL', 'litres'),
	residualVolumeL: finite('residualVolumeL', 'litres'),
	cycles: wholeNumber('cycles')
});
