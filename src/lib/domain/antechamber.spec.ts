import { describe, expect, it } from 'vitest';
import {
	AIR_O2_PPM,
	antechamberEstimate,
	checkAntechamberInput,
	cyclesForTarget,
	o2AfterCyclesPpm,
	pumpDownSeconds,
	residualFraction
} from './antechamber';

const MMHG_PA = 101_325 / 760;
const PSI_PA = 6894.757;
const ATM_PA = 101_325;

describe('residualFraction and o2AfterCyclesPpm (Crowl & Louvar 2011, ch. 7: y_j = y_0 (P_L/P_H)^j)', () => {
	it('multiplies by P_L/P_H per cycle', () => {
		expect(residualFraction(100, 100_000, 0)).toBe(1);
		expect(residualFraction(100, 100_000, 1)).toBeCloseTo(1e-3, 15);
		expect(residualFraction(100, 100_000, 3)).toBeCloseTo(1e-9, 20);
	});

	it('starts from room air at 20.946 % O2 (U.S. Standard Atmosphere 1976, via flush.ts)', () => {
		expect(AIR_O2_PPM).toBeCloseTo(209_460, 6);
		expect(o2AfterCyclesPpm(100, 100_000, 0)).toBeCloseTo(209_460, 6);
		// Three cycles to 1 mbar and back to 1 bar: 209 460 ppm × 10⁻⁹.
		expect(o2AfterCyclesPpm(100, 100_000, 3)).toBeCloseTo(2.0946e-4, 10);
	});
});

describe('cyclesForTarget', () => {
	it('1000 gal vessel, vacuum to 20 mmHg abs., refill to 1 atm, 0.21 → 1 ppm: j = 3.37 → 4 cycles (Crowl & Louvar 2011, ch. 7; the count follows from the formula, example numbering from memory)', () => {
		const r = cyclesForTarget(20 * MMHG_PA, 760 * MMHG_PA, 1, 0.21);
		expect(r.exact).toBeCloseTo(3.37, 2);
		expect(r.cycles).toBe(4);
	});

	it('same vessel pressurised from 14.7 to 94.7 psia, 0.21 → 1 ppm: j = 6.58 → 7 cycles (Crowl & Louvar 2011, ch. 7; from memory, the count follows from the formula)', () => {
		const r = cyclesForTarget(14.7 * PSI_PA, 94.7 * PSI_PA, 1, 0.21);
		expect(r.exact).toBeCloseTo(6.58, 2);
		expect(r.cycles).toBe(7);
	});

	it('vacuum to 6 mmHg, 21 % → 5 ppm: n = 2.20 → 3 cycles (Branan, Rules of Thumb for Chemical Engineers, "Purging")', () => {
		const r = cyclesForTarget(6 * MMHG_PA, 760 * MMHG_PA, 5, 0.21);
		expect(r.exact).toBeCloseTo(2.2, 2);
		expect(r.cycles).toBe(3);
	});

	it('to 0.5 atm, 21 % → 1 %: n = 4.39 → 5 cycles (Branan, Rules of Thumb for Chemical Engineers, "Purging")', () => {
		const r = cyclesForTarget(0.5 * ATM_PA, ATM_PA, 10_000, 0.21);
		expect(r.exact).toBeCloseTo(4.39, 2);
		expect(r.cycles).toBe(5);
	});

	it('a count that lands on a whole number is not rounded up by a float error', () => {
		// 0.1 per cycle from 20.946 %: exactly 3 cycles to 209.46 ppm.
		expect(cyclesForTarget(10_000, 100_000, 209.46).cycles).toBe(3);
	});
});

describe('pumpDownSeconds (Ryans & Roper 1986, t = (V/S) ln(P0/P1); from memory)', () => {
	it('40 L antechamber, 10 m³/h pump, 1013 → 1 mbar: ≈ 99.7 s (REFERENCES.md)', () => {
		expect(pumpDownSeconds(40, 10, 101_300, 100)).toBeCloseTo(99.7, 1);
	});

	it('is the formula itself: V/S times ln of the pressure ratio', () => {
		expect(pumpDownSeconds(1000, 36, 100_000, 100)).toBeCloseTo(100 * Math.log(1000), 10);
	});
});

describe('antechamberEstimate', () => {
	it('defaults to three cycles and adds the optional answers only when asked', () => {
		expect(antechamberEstimate({ lowPa: 100, highPa: 100_000 })).toEqual({
			residualFraction: residualFraction(100, 100_000, 3)
		});
		const r = antechamberEstimate({
			lowPa: 100,
			highPa: 101_300,
			cycles: 2,
			targetPpm: 1,
			volumeL: 40,
			pumpM3PerH: 10
		});
		expect(r.residualFraction).toBeCloseTo((100 / 101_300) ** 2, 15);
		expect(r.cyclesForTarget).toBe(2);
		expect(r.pumpDownSeconds).toBeCloseTo(99.7, 1);
	});
});

describe('checkAntechamberInput', () => {
	const messages = (i: Parameters<typeof checkAntechamberInput>[0]) =>
		checkAntechamberInput(i).map((p) => `${p.field}: ${p.message}`);

	it('accepts a usual transfer', () => {
		expect(
			checkAntechamberInput({
				lowPa: 10,
				highPa: 101_325,
				cycles: 3,
				targetPpm: 1,
				volumeL: 40,
				pumpM3PerH: 10
			})
		).toEqual([]);
	});

	it('refuses an evacuation below 0.1 Pa, a refill outside 1 kPa … 1 MPa, low at or above high, and cycles outside 0–50', () => {
		expect(messages({ lowPa: 0, highPa: -1, cycles: 51 })).toEqual([
			'lowPa: lowPa must be at least 0.1 Pa (0.001 mbar): no antechamber pump gets lower',
			'highPa: highPa must be an absolute pressure from 1 kPa to 1 MPa (10 to 10 000 mbar)',
			'cycles: cycles must be a whole number from 0 to 50'
		]);
		expect(checkAntechamberInput({ lowPa: 5e-324, highPa: 1e5 })[0].field).toBe('lowPa');
		expect(checkAntechamberInput({ lowPa: 2000, highPa: 1000 })).toEqual([
			{ field: 'lowPa', message: 'lowPa must be below the refill pressure' }
		]);
		expect(checkAntechamberInput({ lowPa: 1000, highPa: 1000 })).toEqual([
			{ field: 'lowPa', message: 'lowPa must be below the refill pressure' }
		]);
		expect(checkAntechamberInput({ lowPa: 10, highPa: 2e6 })[0].message).toMatch(
			/^highPa must be an absolute pressure/
		);
		expect(checkAntechamberInput({ lowPa: 10, highPa: 1e5, cycles: 2.5 })).toEqual([
			{ field: 'cycles', message: 'cycles must be a whole number from 0 to 50' }
		]);
		expect(checkAntechamberInput({ lowPa: 0.1, highPa: 1e6, cycles: 50 })).toEqual([]);
	});

	it('refuses a target at or below zero, at or above room air, or beyond 50 cycles, and half a pump-down', () => {
		expect(checkAntechamberInput({ lowPa: 10, highPa: 1e5, targetPpm: 0 })).toEqual([
			{ field: 'targetPpm', message: 'targetPpm must be above zero' }
		]);
		expect(
			checkAntechamberInput({ lowPa: 10, highPa: 1e5, targetPpm: 209_460 })[0].message
		).toMatch(/^targetPpm must be below room air/);
		// Purging to half an atmosphere takes 18 cycles to 1 ppm; from 99 999 Pa, over a million.
		expect(checkAntechamberInput({ lowPa: 50_000, highPa: 1e5, targetPpm: 1 })).toEqual([]);
		expect(messages({ lowPa: 99_999, highPa: 1e5, targetPpm: 1 })).toEqual([
			'targetPpm: targetPpm would take more than 50 cycles at these pressures: evacuate lower or aim higher'
		]);
		expect(checkAntechamberInput({ lowPa: 10, highPa: 1e5, volumeL: 40 })).toEqual([
			{ field: 'pumpM3PerH', message: 'pumpM3PerH is needed with the volume for a pump-down time' }
		]);
		expect(messages({ lowPa: 10, highPa: 1e5, volumeL: 0, pumpM3PerH: -1 })).toEqual([
			'volumeL: volumeL must be from 0.1 to 10000 L for an antechamber',
			'pumpM3PerH: pumpM3PerH must be from 0.1 to 1000 m³/h for an antechamber pump'
		]);
		expect(messages({ lowPa: 10, highPa: 1e5, volumeL: 1e6, pumpM3PerH: 5e-324 })).toEqual([
			'volumeL: volumeL must be from 0.1 to 10000 L for an antechamber',
			'pumpM3PerH: pumpM3PerH must be from 0.1 to 1000 m³/h for an antechamber pump'
		]);
	});

	it('every accepted input at the ends of its bounds gives finite numbers', () => {
		for (const [lowPa, highPa] of [
			[0.1, 1e6],
			[0.1, 1000],
			[999.9, 1000]
		])
			for (const [volumeL, pumpM3PerH] of [
				[0.1, 1000],
				[10_000, 0.1]
			]) {
				const input = { lowPa, highPa, cycles: 50, volumeL, pumpM3PerH };
				expect(checkAntechamberInput(input)).toEqual([]);
				const r = antechamberEstimate(input);
				expect(Number.isFinite(r.residualFraction)).toBe(true);
				expect(Number.isFinite(r.pumpDownSeconds)).toBe(true);
			}
		const r = antechamberEstimate({ lowPa: 0.1, highPa: 1e6, targetPpm: 1e-6 });
		expect(Number.isInteger(r.cyclesForTarget)).toBe(true);
	});
});
