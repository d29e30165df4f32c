export const gases = ['Ar', 'N2'] as const;
export type Gas = (typeof gases)[number];
export const gasLabel: Record<Gas, string> = { Ar: 'Argon', N2: 'Nitrogen' };

/** What a manager sets; out_of_service also follows from an outage in progress. */
export const boxStatuses = ['in_service', 'out_of_service'] as const;
export type BoxStatus = (typeof boxStatuses)[number];

/** ok: below warn; watch: above warn; alarm: above alarm (bookings refused). */
export const atmosphereStates = ['ok', 'watch', 'alarm'] as const;
export type AtmosphereState = (typeof atmosphereStates)[number];

export const readingSources = ['manual', 'check_in', 'check_out', 'csv'] as const;
export type ReadingSource = (typeof readingSources)[number];
/** Where a reading came from, as a list of readings says it. */
export const readingSourceLabel: Record<ReadingSource, string> = {
	manual: 'by hand',
	check_in: 'check-in',
	check_out: 'check-out',
	csv: 'sensor log'
};

/** The state a person reads on a box card: one word and one shape each, never colour alone. */
export type BoxCondition = 'in_service' | 'watch' | 'alarm' | 'out_of_service';

export function boxCondition(
	status: BoxStatus,
	atmosphere: AtmosphereState,
	inOutage: boolean
): BoxCondition {
	if (status === 'out_of_service' || inOutage) return 'out_of_service';
	if (atmosphere === 'alarm') return 'alarm';
	if (atmosphere === 'watch') return 'watch';
	return 'in_service';
}

export const conditionLabel: Record<BoxCondition, string> = {
	in_service: 'In service',
	watch: 'Watch',
	alarm: 'Alarm',
	out_of_service: 'Out of service'
};

/**
 * Chemical classes a box can exclude: mostly what poisons or saturates the purifier's
 * copper catalyst and molecular sieve (common practice; see REFERENCES.md).
 */
export const chemicalClasses = {
	halogenated_solvents: 'Halogenated solvents',
	sulfur_compounds: 'Thiols, H₂S and other sulfur compounds',
	phosphines: 'Phosphines',
	volatile_amines: 'Volatile amines',
	hydrolysable_halides: 'Hydrolysable halides and HCl',
	mercury: 'Mercury and its compounds',
	arsenic_selenium: 'Arsenic and selenium compounds',
	bulk_solvent: 'Large amounts of solvent vapour'
} as const;
export type ChemicalClass = keyof typeof chemicalClasses;
export const chemicalClassKeys = Object.keys(chemicalClasses) as ChemicalClass[];

/** Port positions as seen from the operator's side. */
export const portPositions = [
	'front-left',
	'front-right',
	'front-centre',
	'second-left',
	'second-right',
	'side-left',
	'side-right',
	'rear-left',
	'rear-right'
] as const;

/**
 * A port named in words, side first and then the wall it is on: "front-left" is "left port,
 * front", so a button can say which port it is for without the box face beside it. A
 * position that is not one of portPositions reads as "<position> port".
 */
export function portName(position: string): string {
	const [wall, side] = position.split('-');
	const walls: Record<string, string> = {
		front: 'front',
		second: 'second row',
		side: 'side wall',
		rear: 'rear'
	};
	if (!side || !walls[wall] || !['left', 'right', 'centre'].includes(side))
		return `${position} port`;
	return `${side} port, ${walls[wall]}`;
}

/** The hand a glove on this port should be, from the operator's side, or null. */
export function handForPosition(position: string): 'left' | 'right' | null {
	if (position.endsWith('-left')) return 'left';
	if (position.endsWith('-right')) return 'right';
	return null;
}
