// Water in a glove box's gas: frost point ↔ ppmv. A box's hygrometer reports a frost point
// (the gas is far too dry for a dew point over liquid water), so everything here is over ice.
// Saturation pressure over ice from Murphy & Koop (2005), Q. J. R. Meteorol. Soc. 131:1539,
// eq. 7; see REFERENCES.md ("Water vapour"). The water enhancement factor (≈ 1.0047 at 1 atm,
// WMO-No. 8) is left out, as REFERENCES.md does: it shifts ppmv by about 0.5 %.

import { absolutePressureProblem, KELVIN_OFFSET, type Problem } from './inputs';

export const STANDARD_PRESSURE_PA = 101_325;

/** Eq. 7 holds above 110 K; −120 °C keeps well inside it and below any box hygrometer's range. */
export const MIN_FROST_POINT_C = -120;
/** The triple point of water (273.16 K): above it the condensate is liquid, not frost. */
export const MAX_FROST_POINT_C = 0.01;

const KELVIN = KELVIN_OFFSET;

/** Saturation vapour pressure over ice, Pa, at temperature `tK` (Murphy & Koop 2005, eq. 7). */
export function iceSaturationPressurePa(tK: number): number {
	return Math.exp(9.550426 - 5723.265 / tK + 3.53068 * Math.log(tK) - 0.00728332 * tK);
}

/** Murphy & Koop (2005) eq. 8: their closed-form inverse of eq. 7, good to 0.03 K. */
export function iceSaturationTemperatureApproxK(pPa: number): number {
	const lnP = Math.log(pPa);
	return (1.814625 * lnP + 6190.134) / (29.12 - lnP);
}

/**
 * The temperature, K, at which ice's saturation pressure is `pPa`: eq. 7 solved exactly by
 * Newton's method seeded from eq. 8, so that it round-trips with iceSaturationPressurePa.
 * ln p(T) is smooth and monotonic over the range used; two or three steps converge.
 */
export function iceSaturationTemperatureK(pPa: number): number {
	const target = Math.log(pPa);
	let t = iceSaturationTemperatureApproxK(pPa);
	for (let i = 0; i < 20; i++) {
		const f = 9.550426 - 5723.265 / t + 3.53068 * Math.log(t) - 0.00728332 * t - target;
		const df = 5723.265 / (t * t) + 3.53068 / t - 0.00728332;
		const step = f / df;
		t -= step;
		if (Math.abs(step) < 1e-10) break;
	}
	return t;
}

/** ppmv of water in gas at total pressure `pressurePa` whose frost point is `frostPointC`. */
export function ppmvFromFrostPoint(
	frostPointC: number,
	pressurePa: number = STANDARD_PRESSURE_PA
): number {
	return (1e6 * iceSaturationPressurePa(frostPointC + KELVIN)) / pressurePa;
}

/** Frost point, °C, of gas holding `ppmv` of water at total pressure `pressurePa`. */
export function frostPointFromPpmv(
	ppmv: number,
	pressurePa: number = STANDARD_PRESSURE_PA
): number {
	return iceSaturationTemperatureK(ppmv * 1e-6 * pressurePa) - KELVIN;
}

export type HumidityInput = {
	frostPointC?: number;
	ppmv?: number;
	pressurePa?: number;
};

export type HumidityResult = { frostPointC: number; ppmv: number };

const fmt = (v: number) => (v >= 100 ? v.toFixed(0) : v >= 1 ? v.toFixed(2) : v.toPrecision(3));

export type HumidityField = keyof HumidityInput;

/**
 * Every problem with the input: the gas pressure (absolute, 1 kPa to 1 MPa, one atmosphere
 * when not given) and whichever of frostPointC and ppmv is given (frostPointC when both are).
 */
export function checkHumidityInput(i: HumidityInput): Problem<HumidityField>[] {
	const problems: Problem<HumidityField>[] = [];
	const pressure = i.pressurePa ?? STANDARD_PRESSURE_PA;
	const pressureProblem = absolutePressureProblem('pressurePa', pressure);
	if (pressureProblem) problems.push(pressureProblem);
	// Out of bounds but a pressure all the same: enough to say whether the water fits in it.
	const usable = Number.isFinite(pressure) && pressure > 0;

	if (i.frostPointC !== undefined) {
		const field = 'frostPointC';
		if (!Number.isFinite(i.frostPointC))
			problems.push({ field, message: 'frostPointC must be a number' });
		else if (i.frostPointC < MIN_FROST_POINT_C)
			problems.push({ field, message: `frostPointC must be at or above ${MIN_FROST_POINT_C} °C` });
		else if (i.frostPointC > MAX_FROST_POINT_C)
			problems.push({
				field,
				message: `frostPointC must be at or below ${MAX_FROST_POINT_C} °C (over ice; above it, a dew point)`
			});
		else if (usable && ppmvFromFrostPoint(i.frostPointC, pressure) >= 1e6)
			problems.push({
				field,
				message: `frostPointC is impossible at this pressure: water's vapour pressure at that frost point (${fmt(iceSaturationPressurePa(i.frostPointC + KELVIN))} Pa) is above the gas pressure, more than 100 % water`
			});
	} else if (i.ppmv !== undefined) {
		const field = 'ppmv';
		if (!Number.isFinite(i.ppmv)) problems.push({ field, message: 'ppmv must be a number' });
		else if (!(i.ppmv > 0)) problems.push({ field, message: 'ppmv must be above zero' });
		else if (i.ppmv >= 1e6)
			problems.push({ field, message: 'ppmv must be below 1 000 000 (all water)' });
		else if (!pressureProblem) {
			const low = ppmvFromFrostPoint(MIN_FROST_POINT_C, pressure);
			const high = ppmvFromFrostPoint(MAX_FROST_POINT_C, pressure);
			if (i.ppmv < low)
				problems.push({
					field,
					message: `ppmv must be at least ${fmt(low)} at this pressure (a frost point of ${MIN_FROST_POINT_C} °C)`
				});
			else if (i.ppmv > high)
				problems.push({
					field,
					message: `ppmv must be at most ${fmt(high)} at this pressure (a frost point of ${MAX_FROST_POINT_C} °C)`
				});
		}
	} else {
		problems.push({ field: 'frostPointC', message: 'frostPointC or ppmv is needed' });
	}
	return problems;
}

/** Both values from whichever is given (frostPointC wins when both are); inputs already checked. */
export function humidity(i: HumidityInput): HumidityResult {
	const pressure = i.pressurePa ?? STANDARD_PRESSURE_PA;
	if (i.frostPointC !== undefined)
		return { frostPointC: i.frostPointC, ppmv: ppmvFromFrostPoint(i.frostPointC, pressure) };
	const ppmv = i.ppmv as number;
	return { frostPointC: frostPointFromPpmv(ppmv, pressure), ppmv };
}
