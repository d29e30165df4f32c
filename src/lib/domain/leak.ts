// Leak tests: the hourly leak rate Tf (leak flow / enclosure volume, h⁻¹) by the oxygen method
// or the pressure-change method, and the leak-tightness class of ISO 10648-2:1994 (containment
// enclosures). See REFERENCES.md ("Leak tightness").
//
// The class limits and the 20 % O2 of the oxygen method are as several secondary sources
// restate ISO 10648-2; the standard's own table and its pressure-change formula were not seen.
// The pressure-change method here is the ideal-gas form, with absolute pressures and
// temperatures, which is what the standard's temperature and barometric corrections amount to.
//
// Everything a leak test decides (checks, rate, class, pass or fail) is here, so the leak-test
// API, its form, the /calc page and /api/calc/leak-rate give the same answer for the same input.

import { O2_FRACTION_AIR } from './flush';
import { absolutePressureProblem, KELVIN_OFFSET, PA_PER_MBAR, type Problem } from './inputs';

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

/**
 * A rate is classed (and reported) at six significant figures. The arithmetic leaves noise in
 * the last bits: 400 ppm in 12 min is 1.0×10⁻² h⁻¹ exactly, but 4×10⁻⁴ / (0.2 · 0.2) comes out
 * as 0.009999999999999998, and 100 000 → 100 050 Pa as 5.000000000001×10⁻⁴, each on the wrong
 * side of a class limit. The readings behind a rate carry at most four or five significant
 * figures (a gauge to 0.01 mbar, a barometer to 0.1 mbar, an O2 sensor to 0.1 ppm), while the
 * noise stays below one part in 10⁹ even where p₂/T₂ − p₁/T₁ cancels (a 1 Pa change at 1 MPa):
 * rounding to six removes the noise, and no rate such readings can tell apart from a limit is
 * within the half part in 10⁶ that rounding moves.
 */
export const RATE_SIGNIFICANT_FIGURES = 6;

/** The rate as classed and reported: six significant figures (see RATE_SIGNIFICANT_FIGURES). */
export function roundLeakRate(hourlyLeakRate: number): number {
	return Number.isFinite(hourlyLeakRate) && hourlyLeakRate !== 0
		? Number(hourlyLeakRate.toPrecision(RATE_SIGNIFICANT_FIGURES))
		: hourlyLeakRate;
}

/** ISO 10648-2 class for an hourly leak rate, or null above class 4 (or for no number). */
export function isoClass(hourlyLeakRate: number): IsoClass | null {
	if (!(hourlyLeakRate >= 0) || !Number.isFinite(hourlyLeakRate)) return null;
	const rate = roundLeakRate(hourlyLeakRate);
	for (const c of ISO_CLASS_LIMITS)
		if (c.inclusive ? rate <= c.limit : rate < c.limit) return c.class;
	return null;
}

/** Whether a leak rate meets `required`: class 1 is the tightest, so a lower class also passes. */
export function meetsClass(hourlyLeakRate: number, required: IsoClass): boolean {
	const c = isoClass(hourlyLeakRate);
	return c !== null && c <= required;
}

/** Plausible bounds that catch unit slips (°C for K, kPa for Pa, seconds for minutes). */
export const MIN_TEMPERATURE_K = 200;
export const MAX_TEMPERATURE_K = 400;
/** A leak test runs for minutes to hours: under a minute no gauge moves measurably. */
export const MIN_TEST_MINUTES = 1;
export const MAX_TEST_HOURS = 168;
export const MIN_BAROMETRIC_PA = 50_000;
export const MAX_BAROMETRIC_PA = 115_000;
/** Gloves hold only small pressure differences: ±10 kPa (100 mbar) is far beyond any box's working range. */
export const MAX_GAUGE_PA = 10_000;

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

function minutesProblem(minutes: number): Problem<'minutes'> | null {
	const field = 'minutes';
	if (!Number.isFinite(minutes)) return { field, message: 'minutes must be a number' };
	if (minutes < MIN_TEST_MINUTES)
		return { field, message: `minutes must be at least ${MIN_TEST_MINUTES}` };
	if (minutes > MAX_TEST_HOURS * 60)
		return {
			field,
			message: `minutes is implausibly long for a leak test (over ${MAX_TEST_HOURS} h)`
		};
	return null;
}

export function checkOxygenInput(i: OxygenInput): Problem<keyof OxygenInput>[] {
	const problems: Problem<keyof OxygenInput>[] = [];
	const field = 'o2RisePpm';
	if (!Number.isFinite(i.o2RisePpm))
		problems.push({ field, message: 'o2RisePpm must be a number' });
	else if (i.o2RisePpm < 0)
		problems.push({
			field,
			message: 'o2RisePpm cannot be negative (a falling O2 means the purifier was still on)'
		});
	else if (i.o2RisePpm >= O2_FRACTION_AIR * 1e6)
		problems.push({ field, message: 'o2RisePpm must be below the O2 of room air (209 460 ppm)' });
	const minutes = minutesProblem(i.minutes);
	if (minutes) problems.push(minutes);
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

function checkTemperatures(i: { t1K: number; t2K: number }, problems: Problem[]) {
	for (const field of ['t1K', 't2K'] as const) {
		const t = i[field];
		if (!Number.isFinite(t)) problems.push({ field, message: `${field} must be a number` });
		else if (!(t > 0)) problems.push({ field, message: `${field} must be above 0 K (−273.15 °C)` });
		else if (t < MIN_TEMPERATURE_K || t > MAX_TEMPERATURE_K)
			problems.push({
				field,
				message: `${field} must be between ${MIN_TEMPERATURE_K} and ${MAX_TEMPERATURE_K} K (−73 to 127 °C)`
			});
	}
}

function checkHours(hours: number, problems: Problem[]) {
	const field = 'hours';
	if (!Number.isFinite(hours)) problems.push({ field, message: 'hours must be a number' });
	else if (hours < MIN_TEST_MINUTES / 60)
		problems.push({ field, message: `hours must be at least ${MIN_TEST_MINUTES} minute (1/60 h)` });
	else if (hours > MAX_TEST_HOURS)
		problems.push({
			field,
			message: `hours is implausibly long for a leak test (over ${MAX_TEST_HOURS} h)`
		});
}

export function checkPressureInput(i: PressureInput): Problem<keyof PressureInput>[] {
	const problems: Problem<keyof PressureInput>[] = [];
	for (const field of ['p1Pa', 'p2Pa'] as const) {
		const problem = absolutePressureProblem(field, i[field]);
		if (problem) problems.push(problem);
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

export function checkGaugeInput(i: GaugeInput): Problem<keyof GaugeInput>[] {
	const problems: Problem<keyof GaugeInput>[] = [];
	for (const field of ['gauge1Pa', 'gauge2Pa'] as const) {
		const g = i[field];
		if (!Number.isFinite(g)) problems.push({ field, message: `${field} must be a number` });
		else if (Math.abs(g) > MAX_GAUGE_PA)
			problems.push({
				field,
				message: `${field} is implausible for a glove box (beyond ±${MAX_GAUGE_PA} Pa, ${MAX_GAUGE_PA / 100} mbar)`
			});
	}
	for (const field of ['barometric1Pa', 'barometric2Pa'] as const) {
		const b = i[field];
		if (!(Number.isFinite(b) && b >= MIN_BAROMETRIC_PA && b <= MAX_BAROMETRIC_PA))
			problems.push({
				field,
				message: `${field} must be between ${MIN_BAROMETRIC_PA} and ${MAX_BAROMETRIC_PA} Pa (500–1150 mbar)`
			});
	}
	checkTemperatures(i, problems);
	checkHours(i.hours, problems);
	return problems;
}

// A whole leak test ---------------------------------------------------------------------------

export type LeakTestInput =
	| ({ method: 'oxygen' } & OxygenInput)
	| ({ method: 'pressure' } & PressureInput)
	| ({ method: 'gauge' } & GaugeInput);

/** Every problem with a leak test's input; gauge readings are checked, then what they add up to. */
export function checkLeakTest(input: LeakTestInput): Problem[] {
	if (input.method === 'oxygen') return checkOxygenInput(input);
	if (input.method === 'pressure') return checkPressureInput(input);
	const gauge = checkGaugeInput(input);
	return gauge.length ? gauge : checkPressureInput(pressureInputFromGauge(input));
}

export type LeakTestResult = {
	/** Gauge readings are a pressure-change test. */
	method: 'oxygen' | 'pressure';
	/** Tf, h⁻¹, at six significant figures: the number the class is read from. */
	hourlyLeakRate: number;
	isoClass: IsoClass | null;
	/** The inputs worth keeping with the result, in SI units (gauge readings beside the sums). */
	inputs: Record<string, number>;
	/** Pressure method only: positive when gas came in, negative when it went out. */
	gasChangePerHour?: number;
};

/** Rate and class of a checked leak test (checkLeakTest found no problem). */
export function evaluateLeakTest(input: LeakTestInput): LeakTestResult {
	if (input.method === 'oxygen') {
		const hourlyLeakRate = roundLeakRate(leakRateByOxygen(input));
		return {
			method: 'oxygen',
			hourlyLeakRate,
			isoClass: isoClass(hourlyLeakRate),
			inputs: { o2RisePpm: input.o2RisePpm, minutes: input.minutes }
		};
	}
	const gauge = input.method === 'gauge' ? input : null;
	const absolute: PressureInput = input.method === 'gauge' ? pressureInputFromGauge(input) : input;
	const hourlyLeakRate = roundLeakRate(leakRateByPressure(absolute));
	const { p1Pa, p2Pa, t1K, t2K, hours } = absolute;
	return {
		method: 'pressure',
		hourlyLeakRate,
		isoClass: isoClass(hourlyLeakRate),
		inputs: {
			p1Pa,
			p2Pa,
			t1K,
			t2K,
			hours,
			...(gauge && {
				gauge1Pa: gauge.gauge1Pa,
				gauge2Pa: gauge.gauge2Pa,
				barometric1Pa: gauge.barometric1Pa,
				barometric2Pa: gauge.barometric2Pa
			})
		},
		gasChangePerHour: gasChangePerHour(absolute)
	};
}

/** A checked leak test judged against the class a box must reach. */
export function judgeLeakTest(
	input: LeakTestInput,
	requiredClass: IsoClass
): LeakTestResult & { requiredClass: IsoClass; passed: boolean } {
	const result = evaluateLeakTest(input);
	return { ...result, requiredClass, passed: meetsClass(result.hourlyLeakRate, requiredClass) };
}

// Readings as read off the instruments ---------------------------------------------------------

/**
 * A leak test in the units on the instruments, as the leak-test form and the /calc page take
 * it: mbar, °C and minutes. `gauge` is the box's gauge with a barometer, `absolute` absolute
 * pressures; the oxygen method needs no conversion.
 */
export type LeakReadings = {
	o2RisePpm: number;
	minutes: number;
	gauge1Mbar: number;
	gauge2Mbar: number;
	baro1Mbar: number;
	baro2Mbar: number;
	p1Mbar: number;
	p2Mbar: number;
	t1C: number;
	t2C: number;
};

export type ReadingsMethod = 'oxygen' | 'gauge' | 'absolute';

/** The one conversion of instrument readings to the SI input of the checks; a missing reading is NaN. */
export function leakInputFromReadings(
	method: ReadingsMethod,
	r: Partial<LeakReadings>
): LeakTestInput {
	const v = (key: keyof LeakReadings) => r[key] ?? Number.NaN;
	const pa = (key: keyof LeakReadings) => v(key) * PA_PER_MBAR;
	const kelvin = (key: keyof LeakReadings) => v(key) + KELVIN_OFFSET;
	if (method === 'oxygen')
		return { method: 'oxygen', o2RisePpm: v('o2RisePpm'), minutes: v('minutes') };
	const common = { t1K: kelvin('t1C'), t2K: kelvin('t2C'), hours: v('minutes') / 60 };
	if (method === 'gauge')
		return {
			method: 'gauge',
			gauge1Pa: pa('gauge1Mbar'),
			gauge2Pa: pa('gauge2Mbar'),
			barometric1Pa: pa('baro1Mbar'),
			barometric2Pa: pa('baro2Mbar'),
			...common
		};
	return { method: 'pressure', p1Pa: pa('p1Mbar'), p2Pa: pa('p2Mbar'), ...common };
}

/** Which reading fed each SI field, to put a problem's message beside the input it came from. */
export function readingFieldOf(method: ReadingsMethod): Record<string, keyof LeakReadings> {
	const common = { t1K: 't1C', t2K: 't2C', hours: 'minutes' } as const;
	if (method === 'oxygen') return {};
	if (method === 'gauge')
		return {
			gauge1Pa: 'gauge1Mbar',
			gauge2Pa: 'gauge2Mbar',
			barometric1Pa: 'baro1Mbar',
			barometric2Pa: 'baro2Mbar',
			// Gauge plus barometer: a bad sum is shown at the gauge reading.
			p1Pa: 'gauge1Mbar',
			p2Pa: 'gauge2Mbar',
			...common
		};
	return { p1Pa: 'p1Mbar', p2Pa: 'p2Mbar', ...common };
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
