// Antechamber evacuate/refill cycles and pump-down time. The chamber starts full of room air;
// each cycle evacuates it to the low pressure and refills it to the high pressure with box gas
// (taken as O2-free), so the fraction of the first gas left falls by P_low/P_high per cycle:
// the pressure-swing purge of Crowl & Louvar, Chemical Process Safety, 3rd ed. (2011), ch. 7.
// See REFERENCES.md ("Purging and flushing").

import { O2_FRACTION_AIR } from './flush';

/** Common practice: three evacuate/refill cycles is the usual minimum. */
export const MIN_ANTECHAMBER_CYCLES = 3;
export const MAX_CYCLES = 50;
/** Above 10 bar is no antechamber refill. */
export const MAX_REFILL_PRESSURE_PA = 1e6;

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

const positive = (v: number | undefined) => v !== undefined && Number.isFinite(v) && v > 0;

/** Readable problems, each starting with the field it is about; only given fields are checked. */
export function checkAntechamberInput(i: AntechamberInput): string[] {
	const problems: string[] = [];
	if (!positive(i.lowPa))
		problems.push('lowPa must be above zero (no pump reaches a perfect vacuum)');
	if (!positive(i.highPa)) problems.push('highPa must be above zero');
	else if (i.highPa > MAX_REFILL_PRESSURE_PA)
		problems.push('highPa is implausibly high (above 1 000 000 Pa, 10 bar)');
	if (positive(i.lowPa) && positive(i.highPa) && i.lowPa >= i.highPa)
		problems.push('lowPa must be below the refill pressure');
	if (
		i.cycles !== undefined &&
		(!Number.isInteger(i.cycles) || i.cycles < 0 || i.cycles > MAX_CYCLES)
	)
		problems.push(`cycles must be a whole number from 0 to ${MAX_CYCLES}`);
	if (i.targetPpm !== undefined) {
		if (!positive(i.targetPpm)) problems.push('targetPpm must be above zero');
		else if (i.targetPpm >= AIR_O2_PPM)
			problems.push(`targetPpm must be below room air’s ${AIR_O2_PPM.toFixed(0)} ppm O2`);
	}
	if (i.volumeL !== undefined && !positive(i.volumeL)) problems.push('volumeL must be above zero');
	if (i.pumpM3PerH !== undefined && !positive(i.pumpM3PerH))
		problems.push('pumpM3PerH must be above zero');
	if (i.volumeL !== undefined && i.pumpM3PerH === undefined)
		problems.push('pumpM3PerH is needed with the volume for a pump-down time');
	if (i.pumpM3PerH !== undefined && i.volumeL === undefined)
		problems.push('volumeL is needed with the pump speed for a pump-down time');
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
