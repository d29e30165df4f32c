export const gloveMaterials = [
	'butyl',
	'neoprene',
	'csm',
	'polyurethane',
	'nitrile',
	'other'
] as const;
export type GloveMaterial = (typeof gloveMaterials)[number];
export const materialLabel: Record<GloveMaterial, string> = {
	butyl: 'Butyl',
	neoprene: 'Neoprene',
	csm: 'Chlorosulfonated polyethylene',
	polyurethane: 'Polyurethane',
	nitrile: 'Nitrile',
	other: 'Other'
};

export const gloveHands = ['left', 'right', 'ambidextrous'] as const;
export type GloveHand = (typeof gloveHands)[number];

export const damageLocations = [
	'fingertip',
	'knuckle',
	'palm',
	'back_of_hand',
	'forearm',
	'cuff'
] as const;
export type DamageLocation = (typeof damageLocations)[number];
export const locationLabel: Record<DamageLocation, string> = {
	fingertip: 'Fingertip',
	knuckle: 'Knuckle',
	palm: 'Palm',
	back_of_hand: 'Back of hand',
	forearm: 'Forearm',
	cuff: 'Cuff at the port'
};

/**
 * A hole of 10 mm or more is treated as a catastrophic failure (common practice puts the
 * line at about 1–2 cm; Boxwright takes the cautious end).
 */
export const CATASTROPHIC_HOLE_MM = 10;

export function isCatastrophic(holeSizeMm: number): boolean {
	return holeSizeMm >= CATASTROPHIC_HOLE_MM;
}

/** Turning a glove inside out changes its hand. */
export function effectiveHand(hand: GloveHand, turnedInsideOut: boolean): GloveHand {
	if (!turnedInsideOut || hand === 'ambidextrous') return hand;
	return hand === 'left' ? 'right' : 'left';
}

/** A warning when the glove's (effective) hand does not suit the port's side, else null. */
export function handWarning(
	portHand: 'left' | 'right' | null,
	hand: GloveHand,
	turnedInsideOut: boolean
): string | null {
	const worn = effectiveHand(hand, turnedInsideOut);
	if (!portHand || worn === 'ambidextrous' || worn === portHand) return null;
	return `This port is on the ${portHand}, but the glove as fitted is a ${worn}-hand glove${turnedInsideOut ? ' (turned inside out)' : ''}.`;
}

/**
 * Whether a fitted glove stands damaged: a damage report stands until one says the glove
 * was replaced (or a new glove is fitted, which starts a new history).
 */
export function isDamaged(inspections: { damaged: boolean; action: string }[]): boolean {
	return inspections.some((i) => i.damaged && i.action !== 'replaced');
}

/** Gloves are replaced about yearly (common practice); from 11 months one is due. */
export const GLOVE_DUE_MONTHS = 11;

export type GloveState = 'sound' | 'due' | 'damaged' | 'sealed' | 'none';

/** The state a port's circle shows on the box face. */
export function gloveState(p: {
	installedAt: Date | null;
	damaged: boolean;
	changeUnderWay: boolean;
	now?: Date;
}): GloveState {
	if (p.changeUnderWay) return 'sealed';
	if (!p.installedAt) return 'none';
	if (p.damaged) return 'damaged';
	const months = ((p.now ?? new Date()).getTime() - p.installedAt.getTime()) / (30.44 * 86_400_000);
	return months >= GLOVE_DUE_MONTHS ? 'due' : 'sound';
}
