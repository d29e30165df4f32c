// Glove flush after a glove change: how much oxygen is left in a new glove after n
// squeeze-and-refill cycles with box gas, and what opening the port then adds to the box.
// Ideal-gas mixing; see REFERENCES.md ("Air and ideal gas", "Purging and flushing").

import type { Problem } from './inputs';

/** O2 mole fraction of dry air: U.S. Standard Atmosphere 1976, Table 3 (0.209476), rounded as the CRC Handbook gives it. */
export const O2_FRACTION_AIR = 0.20946;

/** Common practice: at least three squeeze-and-refill cycles before opening, better five. */
export const MIN_FLUSH_CYCLES = 3;
export const RECOMMENDED_FLUSH_CYCLES = 5;
export const MAX_FLUSH_CYCLES = 50;

/**
 * A glove box holds about 0.5–1.2 m³ (REFERENCES.md, common practice); 10 L to 100 m³ takes any
 * box or isolator line and still catches unit slips (m³ for L). A glove holds about 2 L; it
 * cannot hold more gas than the box it opens into. Bounds of plausibility, not of physics.
 */
export const MIN_BOX_VOLUME_L = 10;
export const MAX_BOX_VOLUME_L = 100_000;
/** A glove's gas is measured to a few centilitres at best. */
export const MIN_GLOVE_VOLUME_L = 0.01;

export type FlushInput = {
	boxVolumeL: number;
	/** Gas in the glove when refilled. */
	gloveVolumeL: number;
	/** Gas left in the glove when squeezed flat. */
	residualVolumeL: number;
	cycles: number;
};

export type FlushResult = {
	/** O2 left in the glove's gas, ppm. */
	o2InGlovePpm: number;
	/** O2 the box gains when the port is opened and the glove's gas mixes in, ppm. */
	o2RiseInBoxPpm: number;
};

export type FlushField = keyof FlushInput;

/** The problem with a glove box's volume, if any (also the leak flow's volume on /calc). */
export function boxVolumeProblem<F extends string>(field: F, volumeL: number): Problem<F> | null {
	if (!Number.isFinite(volumeL)) return { field, message: `${field} must be a number of litres` };
	if (volumeL < MIN_BOX_VOLUME_L || volumeL > MAX_BOX_VOLUME_L)
		return {
			field,
			message: `${field} must be from ${MIN_BOX_VOLUME_L} to ${MAX_BOX_VOLUME_L} L for a glove box`
		};
	return null;
}

/** Every problem with the input: volumes in the bounds above, the glove inside its box. */
export function checkFlushInput(i: FlushInput): Problem<FlushField>[] {
	const problems: Problem<FlushField>[] = [];
	const add = (field: FlushField, message: string) => problems.push({ field, message });

	const box = boxVolumeProblem('boxVolumeL', i.boxVolumeL);
	if (box) problems.push(box);
	const boxOk = !box;

	const gloveOk = Number.isFinite(i.gloveVolumeL) && i.gloveVolumeL >= MIN_GLOVE_VOLUME_L;
	if (!Number.isFinite(i.gloveVolumeL))
		add('gloveVolumeL', 'gloveVolumeL must be a number of litres');
	else if (!gloveOk) add('gloveVolumeL', `gloveVolumeL must be at least ${MIN_GLOVE_VOLUME_L} L`);
	else if (boxOk && i.gloveVolumeL > i.boxVolumeL)
		add('gloveVolumeL', 'gloveVolumeL cannot be larger than the box (boxVolumeL)');

	if (!Number.isFinite(i.residualVolumeL))
		add('residualVolumeL', 'residualVolumeL must be a number of litres');
	else if (i.residualVolumeL < 0) add('residualVolumeL', 'residualVolumeL cannot be negative');
	else if (gloveOk && i.residualVolumeL >= i.gloveVolumeL)
		add('residualVolumeL', 'residualVolumeL must be below gloveVolumeL');

	if (!Number.isInteger(i.cycles) || i.cycles < 0 || i.cycles > MAX_FLUSH_CYCLES)
		add('cycles', `cycles must be a whole number from 0 to ${MAX_FLUSH_CYCLES}`);
	return problems;
}

/**
 * The new glove starts full of room air. Each cycle squeezes it to the residual volume
 * (the gas left keeps its O2 fraction) and refills it to the glove volume with box gas
 * (taken as O2-free): the fraction falls by residual/glove per cycle, the
 * pressure-swing purge of Crowl & Louvar ch. 7 with P_L/P_H replaced by the volume ratio.
 * Opening the port mixes the glove's gas into the box: x · V_glove / (V_box + V_glove).
 */
export function flushEstimate(i: FlushInput): FlushResult {
	const fraction = O2_FRACTION_AIR * (i.residualVolumeL / i.gloveVolumeL) ** i.cycles;
	return {
		o2InGlovePpm: fraction * 1e6,
		o2RiseInBoxPpm: ((fraction * i.gloveVolumeL) / (i.boxVolumeL + i.gloveVolumeL)) * 1e6
	};
}
