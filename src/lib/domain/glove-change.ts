// The glove change as a state machine: which step may come next, what undoing does, and
// what must hold before the port is back in use. Pure; the service stores the entries and
// asks this module every time, so the API, the form and the page agree.
import {
	MIN_FLUSH_CYCLES,
	RECOMMENDED_FLUSH_CYCLES,
	flushEstimate,
	type FlushResult
} from './flush';
import { effectiveHand, type GloveHand, type GloveMaterial } from './gloves';

/** The steps of a glove change, in order. `flush_cycle` repeats, once per cycle. */
export const gloveChangeSteps = [
	{ key: 'port_sealed', label: 'Port sealed with its cover; the seal checked' },
	{ key: 'orings_off', label: 'O-rings off' },
	{ key: 'old_glove_removed', label: 'Old glove removed and bagged' },
	{
		key: 'new_glove_fitted',
		label: 'New glove fitted (material, size, thickness, hand, orientation checked)'
	},
	{ key: 'flush_cycle', label: 'Flush cycle: air squeezed out, glove refilled with box gas' },
	{ key: 'orings_on', label: 'O-rings back on' },
	{ key: 'purge_started', label: 'Purge started' },
	{ key: 'cover_removed', label: 'Port cover removed' }
] as const;
export type StepKey = (typeof gloveChangeSteps)[number]['key'];
export const stepKeys = gloveChangeSteps.map((s) => s.key) as StepKey[];
export const stepLabel = Object.fromEntries(
	gloveChangeSteps.map((s) => [s.key, s.label])
) as Record<StepKey, string>;

export function isStepKey(key: unknown): key is StepKey {
	return typeof key === 'string' && (stepKeys as string[]).includes(key);
}

/** The steps done once, in order (every step but the repeating flush). */
const onceSteps = stepKeys.filter((k) => k !== 'flush_cycle');

/**
 * A step may be skipped only with a written reason. Two may not: without the new glove on
 * record the port's glove is unknown, and flush cycles are counted, not skipped (with too
 * few, completion asks for an override instead).
 */
export function canSkip(key: StepKey): boolean {
	return key !== 'new_glove_fitted' && key !== 'flush_cycle';
}

export type FittedGlove = {
	material: GloveMaterial;
	size: string;
	thicknessMm: number;
	hand: GloveHand;
	turnedInsideOut: boolean;
	stockId?: number | null;
};

export type StepEntry = {
	key: StepKey;
	/** ISO 8601 instant. */
	at: string;
	byId: number;
	byName: string;
	/** Present when the step was skipped; the reason is kept and shown. */
	skipReason?: string;
	/** With `new_glove_fitted`: the glove as fitted. */
	glove?: FittedGlove;
};

export type ChangeStatus = 'open' | 'completed' | 'abandoned';

export function flushCycles(entries: readonly StepEntry[]): number {
	return entries.filter((e) => e.key === 'flush_cycle').length;
}

/** The glove recorded as fitted, if that step is done. */
export function fittedGlove(entries: readonly StepEntry[]): FittedGlove | null {
	return entries.find((e) => e.key === 'new_glove_fitted')?.glove ?? null;
}

/** What may be recorded next. Flush cycles come after the fitting and before the O-rings. */
export function nextSteps(entries: readonly StepEntry[]): StepKey[] {
	const last = entries.at(-1)?.key;
	if (!last) return ['port_sealed'];
	if (last === 'new_glove_fitted' || last === 'flush_cycle') return ['flush_cycle', 'orings_on'];
	const after = onceSteps[onceSteps.indexOf(last) + 1];
	return after ? [after] : [];
}

export type StepRefusal =
	| { code: 'step_out_of_order'; message: string; nextSteps: StepKey[] }
	| { code: 'not_skippable'; message: string }
	| { code: 'glove_missing'; message: string }
	| { code: 'change_closed'; message: string };

/** The entries with `entry` added, or why it may not be. */
export function applyStep(
	status: ChangeStatus,
	entries: readonly StepEntry[],
	entry: StepEntry
): { ok: true; entries: StepEntry[] } | { ok: false; refusal: StepRefusal } {
	if (status !== 'open')
		return {
			ok: false,
			refusal: { code: 'change_closed', message: `This glove change is ${status}.` }
		};
	const allowed = nextSteps(entries);
	if (!allowed.includes(entry.key)) {
		const message = allowed.length
			? `“${stepLabel[entry.key]}” cannot be recorded now. Next: ${allowed.map((k) => `“${stepLabel[k]}”`).join(' or ')}.`
			: 'Every step is recorded; complete the change.';
		return { ok: false, refusal: { code: 'step_out_of_order', message, nextSteps: allowed } };
	}
	if (entry.skipReason !== undefined && !canSkip(entry.key))
		return {
			ok: false,
			refusal: {
				code: 'not_skippable',
				message:
					entry.key === 'flush_cycle'
						? 'Flush cycles are counted, not skipped: go on to “O-rings back on”; completing with fewer than three needs a written override.'
						: 'The new glove cannot be skipped: record what is now on the port.'
			}
		};
	if (entry.key === 'new_glove_fitted' && !entry.glove)
		return {
			ok: false,
			refusal: {
				code: 'glove_missing',
				message: 'Record the new glove’s material, size, thickness and hand.'
			}
		};
	return { ok: true, entries: [...entries, entry] };
}

/** The entries without the last one, and that one (null when there was none). */
export function undoStep(entries: readonly StepEntry[]): {
	entries: StepEntry[];
	undone: StepEntry | null;
} {
	return { entries: entries.slice(0, -1), undone: entries.at(-1) ?? null };
}

// ---------------------------------------------------------------------------------------
// The flush estimate, labelled.

/** Common glove-box glove sizes (hand sizes). */
export const gloveSizes = ['7', '7.5', '8', '8.5', '9', '9.5', '10', '10.5', '11'] as const;
export type GloveSize = (typeof gloveSizes)[number];

export function isGloveSize(size: string): size is GloveSize {
	return (gloveSizes as readonly string[]).includes(size);
}

/**
 * The gas a glove holds when refilled, by size: about 2 L for a size 8 glove, scaled with
 * the size. A rough estimate (not from a published source): each page lets the manager
 * put in the volume of their own gloves.
 */
export function gloveVolumeForSize(size: string): number {
	const n = Number(size);
	return Number.isFinite(n) && n > 0 ? Math.round(((2 * n) / 8) * 100) / 100 : 2;
}

/**
 * Squeezed flat, a glove keeps about a tenth of its volume: the refill-to-residual ratio
 * of 10 that REFERENCES.md takes as common practice.
 */
export const RESIDUAL_FRACTION = 0.1;

export type FlushRow = FlushResult & {
	cycles: number;
	label: 'done so far' | 'minimum' | 'recommended';
};

export type FlushTable = {
	boxVolumeL: number;
	gloveVolumeL: number;
	residualVolumeL: number;
	o2WarnPpm: number;
	o2AlarmPpm: number;
	/** The box's latest O2 reading, ppm, or null when none. */
	boxO2Ppm: number | null;
	rows: FlushRow[];
};

/** The estimate for the cycles done, for the minimum and for the recommended count. */
export function flushTable(p: {
	cycles: number;
	boxVolumeL: number;
	gloveVolumeL: number;
	o2WarnPpm: number;
	o2AlarmPpm: number;
	boxO2Ppm: number | null;
}): FlushTable {
	const residualVolumeL = p.gloveVolumeL * RESIDUAL_FRACTION;
	const row = (cycles: number, label: FlushRow['label']): FlushRow => ({
		cycles,
		label,
		...flushEstimate({
			boxVolumeL: p.boxVolumeL,
			gloveVolumeL: p.gloveVolumeL,
			residualVolumeL,
			cycles
		})
	});
	return {
		boxVolumeL: p.boxVolumeL,
		gloveVolumeL: p.gloveVolumeL,
		residualVolumeL,
		o2WarnPpm: p.o2WarnPpm,
		o2AlarmPpm: p.o2AlarmPpm,
		boxO2Ppm: p.boxO2Ppm,
		rows: [
			row(p.cycles, 'done so far'),
			row(MIN_FLUSH_CYCLES, 'minimum'),
			row(RECOMMENDED_FLUSH_CYCLES, 'recommended')
		]
	};
}

// ---------------------------------------------------------------------------------------
// Completion.

export type BlockerCode =
	| 'steps_missing'
	| 'too_few_cycles'
	| 'hand_mismatch'
	| 'release_check_missing'
	| 'opening_above_alarm';
export type Blocker = { code: BlockerCode; message: string };

export type CompletionInput = {
	entries: readonly StepEntry[];
	/** The side the port is on, from its position. */
	portSide: 'left' | 'right' | null;
	overrideReason?: string;
	confirmHand?: boolean;
	/** Whether the box asks for proof before a change ends, and whether it is there. */
	releaseCheck: { needed: boolean; met: boolean };
	flush: FlushTable;
	/** The highest O2 read since the port cover came off, ppm, or null when none. */
	o2SinceOpeningPpm: number | null;
};

/** Every reason completion is refused, in the order a manager would deal with them. */
export function completionBlockers(i: CompletionInput): Blocker[] {
	const out: Blocker[] = [];
	const recorded = new Set(i.entries.map((e) => e.key));
	const missing = onceSteps.filter((k) => !recorded.has(k));
	if (missing.length)
		out.push({
			code: 'steps_missing',
			message: `Not yet done or skipped with a reason: ${missing.map((k) => stepLabel[k]).join('; ')}.`
		});
	const cycles = flushCycles(i.entries);
	if (cycles < MIN_FLUSH_CYCLES && !i.overrideReason?.trim())
		out.push({
			code: 'too_few_cycles',
			message: `${cycles} flush cycle${cycles === 1 ? '' : 's'} recorded; at least ${MIN_FLUSH_CYCLES} are needed (${RECOMMENDED_FLUSH_CYCLES} recommended), or a manager’s written override.`
		});
	const glove = fittedGlove(i.entries);
	if (glove && i.portSide && !i.confirmHand) {
		const worn = effectiveHand(glove.hand, glove.turnedInsideOut);
		if (worn !== 'ambidextrous' && worn !== i.portSide)
			out.push({
				code: 'hand_mismatch',
				message: `The port is on the ${i.portSide}, but the glove as fitted is worn as a ${worn}-hand glove${glove.turnedInsideOut ? ' (turned inside out)' : ''}. Refit it, or confirm the hand is right.`
			});
	}
	if (i.releaseCheck.needed && !i.releaseCheck.met)
		out.push({
			code: 'release_check_missing',
			message:
				'This box needs a passing leak test or an in-spec reading recorded after the last flush cycle.'
		});
	const opening = openingAboveAlarm(i.flush, cycles, i.o2SinceOpeningPpm);
	if (opening) out.push({ code: 'opening_above_alarm', message: opening });
	return out;
}

/**
 * Whether opening the port puts the box above its O2 alarm level: measured when a reading
 * was taken since the cover came off, otherwise estimated from the latest reading plus
 * what the glove's gas adds after the cycles done.
 */
function openingAboveAlarm(
	flush: FlushTable,
	cycles: number,
	measuredPpm: number | null
): string | null {
	if (measuredPpm !== null)
		return measuredPpm >= flush.o2AlarmPpm
			? `The box has read ${round(measuredPpm)} ppm O₂ since the port opened, at or above its alarm level of ${flush.o2AlarmPpm} ppm.`
			: null;
	const rise = flushEstimate({
		boxVolumeL: flush.boxVolumeL,
		gloveVolumeL: flush.gloveVolumeL,
		residualVolumeL: flush.residualVolumeL,
		cycles
	}).o2RiseInBoxPpm;
	const expected = (flush.boxO2Ppm ?? 0) + rise;
	return expected >= flush.o2AlarmPpm
		? `After ${cycles} cycle${cycles === 1 ? '' : 's'}, opening the port is estimated to bring the box to about ${round(expected)} ppm O₂, at or above its alarm level of ${flush.o2AlarmPpm} ppm. A reading taken since the port opened settles it.`
		: null;
}

function round(ppm: number): string {
	return ppm >= 100 ? ppm.toFixed(0) : ppm >= 1 ? ppm.toFixed(1) : ppm.toFixed(3);
}
