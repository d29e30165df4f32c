// Antechamber evacuate/refill cycles and pump-down time. The chamber starts full of room air;
// each cycle evacuates it to the low pressure and refills it to the high pressure with box gas
// (taken as O2-free), so the fraction of the first gas left falls by P_low/P_high per cycle:
// the pressure-swing purge of Crowl & Louvar, Chemical Process Safety, 3rd ed. (2011), ch. 7.
// See REFERENCES.md ("Purging and flushing").

import { O2_FRACTION_AIR } from './flush';
import { absolutePressureProblem, type Problem } from './inputs';

/** Common practice: three evacuate/refill cycles is the usual minimum. */
export const MIN_ANTECHAMBER_CYCLES = 3;
export const MAX_CYCLES = 50;
/**
 * The lowest evacuation pressure taken: 0.1 Pa (10⁻³ mbar), about the ultimate pressure of a
 * two-stage rotary vane pump (from memory). An antechamber's pump gets nowhere near it in the
 * minutes of a cycle, so anything lower is a unit slip.
 */
export const MIN_EVACUATION_PA = 0.1;
/**
 * Antechambers run from a litre or two (the small one) to a few hundred litres (the large one);
 * 0.1 L to 10 m³ and pumps of 0.1 to 1000 m³/h leave room for any transfer chamber and still
 * catch unit slips (m³ for L, L/s for m³/h). Bounds of plausibility, from memory.
 */
export const MIN_CHAMBER_VOLUME_L = 0.1;
export const MAX_CHAMBER_VOLUME_L = 10_000;
export const MIN_PUMP_M3_PER_H = 0.1;
export const MAX_PUMP_M3_PER_H = 1000;

/** ppm O2 in room air, the starting point of every antechamber transfer. */
export const AIR_O2_PPM = O2_FRACTION_AIR * 1e6;

/** Fraction of the first gas left after `cycles` evacuate/refill cycles: (P_low/P_high)^n. */
export function residualFraction(lowPa: number, highPa: number, cycles: number): number {
	return (lowPa / highPa) ** cycles;
}

/** ppm O2 left after `cycles` cycles, starting from room air (or `startFraction`). */
export function o2AfterCyclesPpm(
	lowPa: number,
	highPa: number,
	cycles: number,
	startFraction: number = O2_FRACTION_AIR
): number {
	return startFraction * residualFraction(lowPa, highPa, cycles) * 1e6;
}

/**
 * Cycles needed to bring O2 from `startFraction` (room air unless given) to `targetPpm`:
 * j = ln(y_j / y_0) / ln(P_L / P_H) (Crowl & Louvar ch. 7). `exact` is the fractional count,
 * `cycles` the whole number to run.
 */
export function cyclesForTarget(
	lowPa: number,
	highPa: number,
	targetPpm: number,
	startFraction: number = O2_FRACTION_AIR
): { exact: number; cycles: number } {
	const exact = Math.log(targetPpm / 1e6 / startFraction) / Math.log(lowPa / highPa);
	// A count a rounding error above a whole number is that whole number.
	return { exact, cycles: Math.max(0, Math.ceil(exact - 1e-9)) };
}

/**
 * Time to pump `volumeL` from `fromPa` down to `toPa` with a pump of speed `pumpM3PerH`:
 * t = (V/S) ln(P0/P1) (Ryans & Roper, Process Vacuum System Design and Operation, 1986).
 * Assumes the pump keeps its speed all the way down and nothing outgasses: real chambers take
 * longer near the pump's ultimate pressure and with porous items inside.
 */
export function pumpDownSeconds(
	volumeL: number,
	pumpM3PerH: number,
	fromPa: number,
	toPa: number
): number {
	const volumeM3 = volumeL / 1000;
	const speedM3PerS = pumpM3PerH / 3600;
	return (volumeM3 / speedM3PerS) * Math.log(fromPa / toPa);
}

export type AntechamberInput = {
	lowPa: number;
	highPa: number;
	cycles?: number;
	targetPpm?: number;
	volumeL?: number;
	pumpM3PerH?: number;
};

export type AntechamberField = keyof AntechamberInput;

/** Every problem with the input; the optional fields are checked only when given. */
export function checkAntechamberInput(i: AntechamberInput): Problem<AntechamberField>[] {
	const problems: Problem<AntechamberField>[] = [];
	const add = (field: AntechamberField, message: string) => problems.push({ field, message });

	const lowOk = Number.isFinite(i.lowPa) && i.lowPa >= MIN_EVACUATION_PA;
	if (!Number.isFinite(i.lowPa)) add('lowPa', 'lowPa must be a number of pascals');
	else if (!lowOk)
		add(
			'lowPa',
			`lowPa must be at least ${MIN_EVACUATION_PA} Pa (${MIN_EVACUATION_PA / 100} mbar): no antechamber pump gets lower`
		);
	const high = absolutePressureProblem('highPa', i.highPa);
	if (high) problems.push(high);
	else if (lowOk && i.lowPa >= i.highPa) add('lowPa', 'lowPa must be below the refill pressure');

	if (
		i.cycles !== undefined &&
		(!Number.isInteger(i.cycles) || i.cycles < 0 || i.cycles > MAX_CYCLES)
	)
		add('cycles', `cycles must be a whole number from 0 to ${MAX_CYCLES}`);

	if (i.targetPpm !== undefined) {
		if (!Number.isFinite(i.targetPpm)) add('targetPpm', 'targetPpm must be a number');
		else if (!(i.targetPpm > 0)) add('targetPpm', 'targetPpm must be above zero');
		else if (i.targetPpm >= AIR_O2_PPM)
			add('targetPpm', `targetPpm must be below room air’s ${AIR_O2_PPM.toFixed(0)} ppm O2`);
		else if (lowOk && !high && i.lowPa < i.highPa) {
			const { cycles } = cyclesForTarget(i.lowPa, i.highPa, i.targetPpm);
			if (!(cycles <= MAX_CYCLES))
				add(
					'targetPpm',
					`targetPpm would take more than ${MAX_CYCLES} cycles at these pressures: evacuate lower or aim higher`
				);
		}
	}

	if (i.volumeL !== undefined) {
		if (!Number.isFinite(i.volumeL)) add('volumeL', 'volumeL must be a number of litres');
		else if (i.volumeL < MIN_CHAMBER_VOLUME_L || i.volumeL > MAX_CHAMBER_VOLUME_L)
			add(
				'volumeL',
				`volumeL must be from ${MIN_CHAMBER_VOLUME_L} to ${MAX_CHAMBER_VOLUME_L} L for an antechamber`
			);
	}
	if (i.pumpM3PerH !== undefined) {
		if (!Number.isFinite(i.pumpM3PerH)) add('pumpM3PerH', 'pumpM3PerH must be a number of m³/h');
		else if (i.pumpM3PerH < MIN_PUMP_M3_PER_H || i.pumpM3PerH > MAX_PUMP_M3_PER_H)
			add(
				'pumpM3PerH',
				`pumpM3PerH must be from ${MIN_PUMP_M3_PER_H} to ${MAX_PUMP_M3_PER_H} m³/h for an antechamber pump`
			);
	}
	if (i.volumeL !== undefined && i.pumpM3PerH === undefined)
		add('pumpM3PerH', 'pumpM3PerH is needed with the volume for a pump-down time');
	if (i.pumpM3PerH !== undefined && i.volumeL === undefined)
		add('volumeL', 'volumeL is needed with the pump speed for a pump-down time');
	return problems;
}

export type AntechamberResult = {
	residualFraction: number;
	cyclesForTarget?: number;
	pumpDownSeconds?: number;
};

/** The contract's answer for checked input: cycles default to the usual three. */
export function antechamberEstimate(i: AntechamberInput): AntechamberResult {
	const result: AntechamberResult = {
		residualFraction: residualFraction(i.lowPa, i.highPa, i.cycles ?? MIN_ANTECHAMBER_CYCLES)
	};
	if (i.targetPpm !== undefined)
		result.cyclesForTarget = cyclesForTarget(i.lowPa, i.highPa, i.targetPpm).cycles;
	if (i.volumeL !== undefined && i.pumpM3PerH !== undefined)
		result.pumpDownSeconds = pumpDownSeconds(i.volumeL, i.pumpM3PerH, i.highPa, i.lowPa);
	return result;
}
