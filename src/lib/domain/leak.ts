// Leak tests: the hourly leak rate Tf (leak flow / enclosure volume, h⁻¹) by the oxygen method
// or the pressure-change method, and the leak-tightness class of ISO 10648-2:1994 (containment
// enclosures). See REFERENCES.md ("Leak tightness").
//
// The class limits and the 20 % O2 of the oxygen method are as several secondary sources
// restate ISO 10648-2; the standard's own table and its pressure-change formula were not seen.
// The pressure-change method here is the ideal-gas form, with absolute pressures and
// temperatures, which is what the standard's temperature and barometric corrections amount to.

import { O2_FRACTION_AIR } from './flush';

/** The oxygen method takes air as 20 % O2 (ISO 10648-2, as restated), not 20.946 %. */
export const ISO_AIR_O2_FRACTION = 0.2;

export type IsoClass = 1 | 2 | 3 | 4;

/** Upper limits of Tf, h⁻¹, by class: class 1 includes its limit, the others stop below theirs. */
export const ISO_CLASS_LIMITS: { class: IsoClass; limit: number; inclusive: boolean }[] = [
	{ class: 1, limit: 5e-4, inclusive: true },
	{ class: 2, limit: 2.5e-3, inclusive: false },
	{ class: 3, limit: 1e-2, inclusive: false },
	{ class: 4, limit: 1e-1, inclusive: false }
];

/** Plausible bounds that catch unit slips (°C for K, kPa for Pa, seconds for minutes). */
export const MIN_TEMPERATURE_K = 200;
export const MAX_TEMPERATURE_K = 400;
export const MAX_PRESSURE_PA = 1e6;
export const MAX_TEST_HOURS = 168;
export const MIN_BAROMETRIC_PA = 50_000;
export const MAX_BAROMETRIC_PA = 115_000;
/** Gloves hold only small pressure differences: ±10 kPa (100 mbar) is far beyond any box's working range. */
export const MAX_GAUGE_PA = 10_000;

/** ISO 10648-2 class for an hourly leak rate, or null above class 4 (or for no number). */
export function isoClass(hourlyLeakRate: number): IsoClass | null {
	if (!(hourlyLeakRate >= 0)) return null;
	for (const c of ISO_CLASS_LIMITS)
		if (c.inclusive ? hourlyLeakRate <= c.limit : hourlyLeakRate < c.limit) return c.class;
	return null;
}

/** Whether a leak rate meets `required`: class 1 is the tightest, so a lower class also passes. */
export function meetsClass(hourlyLeakRate: number, required: IsoClass): boolean {
	const c = isoClass(hourlyLeakRate);
	return c !== null && c <= required;
}

// Oxygen method ----------------------------------------------------------------------------

export type OxygenInput = {
	/** Rise in the box's O2 over the test with circulation stopped, ppm. */
	o2RisePpm: number;
	minutes: number;
};

/** Tf = ΔC_O2 / (0.20 · Δt[h]), ΔC as a fraction: the air that came in, per box volume per hour. */
export function leakRateByOxygen(i: OxygenInput): number {
	return (i.o2RisePpm * 1e-6) / (ISO_AIR_O2_FRACTION * (i.minutes / 60));
}

export function checkOxygenInput(i: OxygenInput): string[] {
	const problems: string[] = [];
	if (!(Number.isFinite(i.o2RisePpm) && i.o2RisePpm >= 0))
		problems.push('o2RisePpm cannot be negative (a falling O2 means the purifier was still on)');
	else if (i.o2RisePpm >= O2_FRACTION_AIR * 1e6)
		problems.push('o2RisePpm must be below the O2 of room air (209 460 ppm)');
	if (!(Number.isFinite(i.minutes) && i.minutes > 0)) problems.push('minutes must be above zero');
	else if (i.minutes > MAX_TEST_HOURS * 60)
		problems.push(`minutes is implausibly long for a leak test (over ${MAX_TEST_HOURS} h)`);
	return problems;
}

// Pressure-change method --------------------------------------------------------------------

export type PressureInput = {
	/** Absolute pressure in the box at the start and end, Pa. */
	p1Pa: number;
	p2Pa: number;
	/** Gas temperature in the box at the start and end, K. */
	t1K: number;
	t2K: number;
	hours: number;
};

/**
 * The signed relative change in the gas in the box per hour, from n ∝ p/T:
 * [(p2/T2) − (p1/T1)] / (p1/T1) / Δt. Positive: gas came in, as it does into a box held below
 * atmosphere, whose pressure rises toward atmosphere. Negative: gas went out, as from a box held
 * above atmosphere. A sign the other way from what the box's gauge pressure predicts means
 * something other than a leak moved the pressure (pressure control or circulation still on, a
 * temperature not corrected for, a gas supply not closed).
 */
export function gasChangePerHour(i: PressureInput): number {
	const n1 = i.p1Pa / i.t1K;
	const n2 = i.p2Pa / i.t2K;
	return (n2 - n1) / n1 / i.hours;
}

/** Tf by the pressure-change method: the magnitude of gasChangePerHour, whichever way gas moved. */
export function leakRateByPressure(i: PressureInput): number {
	return Math.abs(gasChangePerHour(i));
}

function checkTemperatures(i: { t1K: number; t2K: number }, problems: string[]) {
	for (const key of ['t1K', 't2K'] as const) {
		const t = i[key];
		if (!(Number.isFinite(t) && t > 0)) problems.push(`${key} must be above 0 K`);
		else if (t < MIN_TEMPERATURE_K || t > MAX_TEMPERATURE_K)
			problems.push(
				`${key} must be between ${MIN_TEMPERATURE_K} and ${MAX_TEMPERATURE_K} K (−73 to 127 °C)`
			);
	}
}

function checkHours(hours: number, problems: string[]) {
	if (!(Number.isFinite(hours) && hours > 0)) problems.push('hours must be above zero');
	else if (hours > MAX_TEST_HOURS)
		problems.push(`hours is implausibly long for a leak test (over ${MAX_TEST_HOURS} h)`);
}

export function checkPressureInput(i: PressureInput): string[] {
	const problems: string[] = [];
	for (const key of ['p1Pa', 'p2Pa'] as const) {
		const p = i[key];
		if (!(Number.isFinite(p) && p > 0))
			problems.push(`${key} must be an absolute pressure above zero (gauge plus barometric)`);
		else if (p > MAX_PRESSURE_PA)
			problems.push(`${key} is implausibly high (above 1 000 000 Pa, 10 bar)`);
	}
	checkTemperatures(i, problems);
	checkHours(i.hours, problems);
	return problems;
}

// Gauge readings ------------------------------------------------------------------------------

/** What a manager reads off: the box's gauge (relative to the room) and a barometer, each twice. */
export type GaugeInput = {
	gauge1Pa: number;
	gauge2Pa: number;
	barometric1Pa: number;
	barometric2Pa: number;
	t1K: number;
	t2K: number;
	hours: number;
};

/** Absolute pressure = gauge + barometric: a box at −1000 Pa gauge under 101 325 Pa holds 100 325 Pa. */
export function absoluteFromGauge(gaugePa: number, barometricPa: number): number {
	return gaugePa + barometricPa;
}

export function pressureInputFromGauge(i: GaugeInput): PressureInput {
	return {
		p1Pa: absoluteFromGauge(i.gauge1Pa, i.barometric1Pa),
		p2Pa: absoluteFromGauge(i.gauge2Pa, i.barometric2Pa),
		t1K: i.t1K,
		t2K: i.t2K,
		hours: i.hours
	};
}

export function checkGaugeInput(i: GaugeInput): string[] {
	const problems: string[] = [];
	for (const key of ['gauge1Pa', 'gauge2Pa'] as const) {
		const g = i[key];
		if (!Number.isFinite(g)) problems.push(`${key} must be a number`);
		else if (Math.abs(g) > MAX_GAUGE_PA)
			problems.push(
				`${key} is implausible for a glove box (beyond ±${MAX_GAUGE_PA} Pa, ${MAX_GAUGE_PA / 100} mbar)`
			);
	}
	for (const key of ['barometric1Pa', 'barometric2Pa'] as const) {
		const b = i[key];
		if (!(Number.isFinite(b) && b >= MIN_BAROMETRIC_PA && b <= MAX_BAROMETRIC_PA))
			problems.push(
				`${key} must be between ${MIN_BAROMETRIC_PA} and ${MAX_BAROMETRIC_PA} Pa (500–1150 mbar)`
			);
	}
	checkTemperatures(i, problems);
	checkHours(i.hours, problems);
	return problems;
}

// Vacuum units ---------------------------------------------------------------------------------

/** The leak flow in mbar·L/s: Q = Tf · V · p / 3600, V in L, p in mbar. */
export function leakFlowMbarLPerS(
	hourlyLeakRate: number,
	volumeL: number,
	pressureMbar: number
): number {
	return (hourlyLeakRate * volumeL * pressureMbar) / 3600;
}
