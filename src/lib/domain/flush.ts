// Glove flush after a glove change: how much oxygen is left in a new glove after n
// squeeze-and-refill cycles with box gas, and what opening the port then adds to the box.
// Ideal-gas mixing; see REFERENCES.md ("Air and ideal gas", "Purging and flushing").

/** O2 mole fraction of dry air: U.S. Standard Atmosphere 1976, Table 3 (0.209476), rounded as the CRC Handbook gives it. */
export const O2_FRACTION_AIR = 0.20946;

/** Common practice: at least three squeeze-and-refill cycles before opening, better five. */
export const MIN_FLUSH_CYCLES = 3;
export const RECOMMENDED_FLUSH_CYCLES = 5;

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

export function checkFlushInput(i: FlushInput): string[] {
	const problems: string[] = [];
	if (!(i.boxVolumeL > 0)) problems.push('boxVolumeL must be above zero');
	if (!(i.gloveVolumeL > 0)) problems.push('gloveVolumeL must be above zero');
	if (!(i.residualVolumeL >= 0)) problems.push('residualVolumeL cannot be negative');
	if (i.residualVolumeL >= i.gloveVolumeL)
		problems.push('residualVolumeL must be below gloveVolumeL');
	if (!Number.isInteger(i.cycles) || i.cycles < 0 || i.cycles > 50)
		problems.push('cycles must be a whole number from 0 to 50');
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
