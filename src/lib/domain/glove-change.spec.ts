import { describe, expect, it } from 'vitest';
import {
	applyStep,
	completionBlockers,
	flushCycles,
	flushTable,
	gloveVolumeForSize,
	isGloveSize,
	nextSteps,
	stepKeys,
	undoStep,
	type CompletionInput,
	type FittedGlove,
	type StepEntry,
	type StepKey
} from './glove-change';
import { O2_FRACTION_AIR } from './flush';

const glove: FittedGlove = {
	material: 'butyl',
	size: '8',
	thicknessMm: 0.4,
	hand: 'left',
	turnedInsideOut: false
};
let clock = 0;
const entry = (key: StepKey, extra: Partial<StepEntry> = {}): StepEntry => ({
	key,
	at: new Date(Date.UTC(2026, 11, 2, 9, 0, clock++)).toISOString(),
	byId: 1,
	byName: 'M',
	...(key === 'new_glove_fitted' ? { glove } : {}),
	...extra
});
/** The entries after recording `keys` in turn, each of which must be allowed. */
function run(keys: StepKey[]): StepEntry[] {
	let entries: StepEntry[] = [];
	for (const key of keys) {
		const r = applyStep('open', entries, entry(key));
		if (!r.ok) throw new Error(`${key} refused: ${r.refusal.message}`);
		entries = r.entries;
	}
	return entries;
}
const upToFitting: StepKey[] = [
	'port_sealed',
	'orings_off',
	'old_glove_removed',
	'new_glove_fitted'
];
const everyStep = (cycles: number): StepKey[] => [
	...upToFitting,
	...Array<StepKey>(cycles).fill('flush_cycle'),
	'orings_on',
	'purge_started',
	'cover_removed'
];

describe('the glove change state machine', () => {
	it('starts with the port sealed, and only that', () => {
		expect(nextSteps([])).toEqual(['port_sealed']);
		for (const key of stepKeys.filter((k) => k !== 'port_sealed')) {
			const r = applyStep('open', [], entry(key));
			expect(r.ok).toBe(false);
			if (!r.ok)
				expect(r.refusal).toMatchObject({ code: 'step_out_of_order', nextSteps: ['port_sealed'] });
		}
	});

	it('allows each step once, in order, and refuses every other step at each point', () => {
		const order = everyStep(1);
		let entries: StepEntry[] = [];
		for (const key of order) {
			const allowed = nextSteps(entries);
			for (const other of stepKeys.filter((k) => !allowed.includes(k)))
				expect(
					applyStep('open', entries, entry(other)).ok,
					`${other} after ${entries.at(-1)?.key}`
				).toBe(false);
			const r = applyStep('open', entries, entry(key));
			expect(r.ok, key).toBe(true);
			if (r.ok) entries = r.entries;
		}
		expect(nextSteps(entries)).toEqual([]);
		// A step already done cannot be recorded again.
		expect(applyStep('open', entries, entry('port_sealed')).ok).toBe(false);
	});

	it('takes flush cycles only after the new glove is fitted and before the O-rings go back', () => {
		expect(nextSteps(run(['port_sealed', 'orings_off', 'old_glove_removed']))).toEqual([
			'new_glove_fitted'
		]);
		const fitted = run(upToFitting);
		expect(nextSteps(fitted)).toEqual(['flush_cycle', 'orings_on']);
		const flushed = run([...upToFitting, 'flush_cycle', 'flush_cycle']);
		expect(flushCycles(flushed)).toBe(2);
		expect(nextSteps(flushed)).toEqual(['flush_cycle', 'orings_on']);
		const closed = run([...upToFitting, 'flush_cycle', 'orings_on']);
		expect(applyStep('open', closed, entry('flush_cycle')).ok).toBe(false);
	});

	it('skips a step only with a reason, and never the glove or a flush cycle', () => {
		const skipped = applyStep(
			'open',
			[],
			entry('port_sealed', { skipReason: 'Cover fitted at 08:00 by the night shift' })
		);
		expect(skipped.ok).toBe(true);
		const fitted = run(upToFitting);
		const noCycle = applyStep('open', fitted, entry('flush_cycle', { skipReason: 'no time' }));
		expect(noCycle.ok).toBe(false);
		if (!noCycle.ok) expect(noCycle.refusal.code).toBe('not_skippable');
		const before = run(['port_sealed', 'orings_off', 'old_glove_removed']);
		const noGlove = applyStep('open', before, entry('new_glove_fitted', { skipReason: 'x' }));
		expect(noGlove.ok).toBe(false);
		const bare = applyStep('open', before, { ...entry('new_glove_fitted'), glove: undefined });
		expect(bare.ok).toBe(false);
		if (!bare.ok) expect(bare.refusal.code).toBe('glove_missing');
	});

	it('refuses every step on a completed or abandoned change', () => {
		for (const status of ['completed', 'abandoned'] as const) {
			const r = applyStep(status, [], entry('port_sealed'));
			expect(r.ok).toBe(false);
			if (!r.ok) expect(r.refusal.code).toBe('change_closed');
		}
	});

	it('undoes the last step only, which makes it the next step again', () => {
		const entries = run([...upToFitting, 'flush_cycle']);
		const { entries: after, undone } = undoStep(entries);
		expect(undone?.key).toBe('flush_cycle');
		expect(flushCycles(after)).toBe(0);
		const again = undoStep(after);
		expect(again.undone?.key).toBe('new_glove_fitted');
		expect(nextSteps(again.entries)).toEqual(['new_glove_fitted']);
		expect(undoStep([]).undone).toBeNull();
	});
});

describe('completion', () => {
	const flush = (cycles: number, boxO2Ppm: number | null = 0.5) =>
		flushTable({
			cycles,
			boxVolumeL: 1000,
			gloveVolumeL: 2,
			o2WarnPpm: 1,
			o2AlarmPpm: 10,
			boxO2Ppm
		});
	const input = (over: Partial<CompletionInput> & { cycles?: number } = {}): CompletionInput => {
		const cycles = over.cycles ?? 5;
		return {
			entries: run(everyStep(cycles)),
			portSide: 'left',
			releaseCheck: { needed: false, met: false },
			flush: flush(cycles),
			o2SinceOpeningPpm: null,
			...over
		};
	};
	const codes = (i: CompletionInput) => completionBlockers(i).map((b) => b.code);

	it('has nothing to say about a change done in full with five cycles', () => {
		expect(codes(input())).toEqual([]);
	});

	it('lists every step neither done nor skipped', () => {
		const blockers = completionBlockers(
			input({ entries: run([...upToFitting, 'flush_cycle', 'flush_cycle', 'flush_cycle']) })
		);
		expect(blockers[0].code).toBe('steps_missing');
		expect(blockers[0].message).toContain('O-rings back on');
		expect(blockers[0].message).toContain('Port cover removed');
		// A skipped step with its reason counts as dealt with.
		let entries = run([
			'port_sealed',
			'orings_off',
			'old_glove_removed',
			'new_glove_fitted',
			'flush_cycle',
			'flush_cycle',
			'flush_cycle',
			'orings_on'
		]);
		const skip = applyStep(
			'open',
			entries,
			entry('purge_started', { skipReason: 'Box purifier on continuous circulation' })
		);
		if (skip.ok) entries = skip.entries;
		const cover = applyStep('open', entries, entry('cover_removed'));
		if (cover.ok) entries = cover.entries;
		expect(codes(input({ entries, flush: flush(3) }))).toEqual([]);
	});

	it('needs three flush cycles, or a written override', () => {
		expect(codes(input({ cycles: 2, flush: flush(2) }))).toEqual(['too_few_cycles']);
		expect(codes(input({ cycles: 2, flush: flush(2), overrideReason: '   ' }))).toEqual([
			'too_few_cycles'
		]);
		expect(
			codes(
				input({ cycles: 2, flush: flush(2), overrideReason: 'Port stays closed for regeneration' })
			)
		).toEqual([]);
		expect(codes(input({ cycles: 3, flush: flush(3) }))).toEqual([]);
	});

	it('refuses a glove of the other hand unless confirmed; inside out changes the hand', () => {
		expect(codes(input({ portSide: 'right' }))).toEqual(['hand_mismatch']);
		expect(codes(input({ portSide: 'right', confirmHand: true }))).toEqual([]);
		const inverted = run(everyStep(5)).map((e) =>
			e.glove ? { ...e, glove: { ...e.glove, turnedInsideOut: true } } : e
		);
		expect(codes(input({ entries: inverted, portSide: 'right' }))).toEqual([]);
		expect(codes(input({ entries: inverted, portSide: 'left' }))).toEqual(['hand_mismatch']);
		expect(codes(input({ portSide: null }))).toEqual([]);
	});

	it('waits for the box’s release check when it has one', () => {
		expect(codes(input({ releaseCheck: { needed: true, met: false } }))).toEqual([
			'release_check_missing'
		]);
		expect(codes(input({ releaseCheck: { needed: true, met: true } }))).toEqual([]);
	});

	it('refuses when opening the port would, by the estimate, take the box to its alarm level', () => {
		// One cycle of a 2 L glove into 1000 L: 0.20946 × 0.1 × 2/1002 = 41.8 ppm, over 10.
		expect(codes(input({ cycles: 1, flush: flush(1), overrideReason: 'x' }))).toEqual([
			'opening_above_alarm'
		]);
		// Two cycles: 4.18 ppm on 0.5 ppm stays under 10; on a box already at 6 ppm it does not.
		expect(codes(input({ cycles: 2, flush: flush(2), overrideReason: 'x' }))).toEqual([]);
		expect(codes(input({ cycles: 2, flush: flush(2, 6), overrideReason: 'x' }))).toEqual([
			'opening_above_alarm'
		]);
		// A reading since the port opened settles it either way.
		expect(
			codes(input({ cycles: 1, flush: flush(1), overrideReason: 'x', o2SinceOpeningPpm: 0.8 }))
		).toEqual([]);
		expect(codes(input({ o2SinceOpeningPpm: 12 }))).toEqual(['opening_above_alarm']);
	});

	it('lists every reason at once', () => {
		expect(
			codes(
				input({
					entries: run([...upToFitting, 'flush_cycle']),
					flush: flush(1),
					portSide: 'right',
					releaseCheck: { needed: true, met: false }
				})
			)
		).toEqual([
			'steps_missing',
			'too_few_cycles',
			'hand_mismatch',
			'release_check_missing',
			'opening_above_alarm'
		]);
	});
});

describe('the flush estimate, labelled', () => {
	it('gives the O2 left in the glove and the rise in the box for the cycles done, three and five', () => {
		const t = flushTable({
			cycles: 1,
			boxVolumeL: 1000,
			gloveVolumeL: 2,
			o2WarnPpm: 1,
			o2AlarmPpm: 10,
			boxO2Ppm: null
		});
		expect(t.residualVolumeL).toBeCloseTo(0.2, 10);
		expect(t.rows.map((r) => [r.label, r.cycles])).toEqual([
			['done so far', 1],
			['minimum', 3],
			['recommended', 5]
		]);
		// Pressure-swing purge, Crowl & Louvar, Chemical Process Safety ch. 7:
		// y_j = y_0 (P_L/P_H)^j, the volume ratio standing for P_L/P_H: 0.20946 × 0.1^5.
		expect(t.rows[2].o2InGlovePpm).toBeCloseTo(O2_FRACTION_AIR * 1e6 * 1e-5, 6); // 2.0946 ppm
		// Ideal-gas mixing of the glove's gas into the box (REFERENCES.md, "Air and ideal gas"):
		// x · V_glove / (V_box + V_glove) = 2.0946e-6 × 2/1002.
		expect(t.rows[2].o2RiseInBoxPpm).toBeCloseTo(2.0946 * (2 / 1002), 9);
		// The two quantities differ by the mixing ratio and must not be confused.
		expect(t.rows[0].o2InGlovePpm / t.rows[0].o2RiseInBoxPpm).toBeCloseTo(1002 / 2, 6);
	});

	it('estimates a glove’s volume from its size (about 2 L at size 8) and knows the sizes', () => {
		expect(gloveVolumeForSize('8')).toBe(2);
		expect(gloveVolumeForSize('10')).toBe(2.5);
		expect(isGloveSize('8.5')).toBe(true);
		expect(isGloveSize('XXL')).toBe(false);
	});
});
