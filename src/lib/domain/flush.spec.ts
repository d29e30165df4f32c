import { describe, expect, it } from 'vitest';
import { checkFlushInput, flushEstimate, O2_FRACTION_AIR } from './flush';

describe('flushEstimate', () => {
	it('uses the O2 fraction of dry air of the U.S. Standard Atmosphere 1976 (0.20946)', () => {
		expect(O2_FRACTION_AIR).toBe(0.20946);
	});

	it('an unflushed 1 L glove opened into a 1000 L box: 209.25 ppm by exact mixing (REFERENCES.md, ideal-gas mixing; ≈ 209.46 by the approximate form)', () => {
		const r = flushEstimate({ boxVolumeL: 1000, gloveVolumeL: 1, residualVolumeL: 0.1, cycles: 0 });
		expect(r.o2InGlovePpm).toBeCloseTo(209_460, 0);
		expect(r.o2RiseInBoxPpm).toBeCloseTo(209.25, 2);
	});

	it('matches the other mixing rows of REFERENCES.md within the approximate form’s 0.1 %', () => {
		const rise = (air: number, box: number) =>
			flushEstimate({ boxVolumeL: box, gloveVolumeL: air, residualVolumeL: 0, cycles: 0 })
				.o2RiseInBoxPpm;
		expect(rise(0.5, 1000)).toBeCloseTo(104.7, 0); // 0.5 L into 1000 L → 104.7 ppm
		expect(rise(1, 500)).toBeCloseTo(418.9 * (500 / 501), 1); // 1 L into 500 L → 418.9 ppm (approx.)
		expect(rise(0.1, 2000)).toBeCloseTo(10.47, 2); // 0.1 L into 2000 L → 10.47 ppm
	});

	it('each cycle with a refill-to-residual ratio of 10 cuts the O2 in the glove tenfold (common practice row)', () => {
		const at = (cycles: number) =>
			flushEstimate({ boxVolumeL: 1000, gloveVolumeL: 2, residualVolumeL: 0.2, cycles })
				.o2InGlovePpm;
		expect(at(1) / at(0)).toBeCloseTo(0.1, 10);
		expect(at(3)).toBeCloseTo(209.46, 2);
		expect(at(5)).toBeCloseTo(2.0946, 4);
	});

	it('a few litres of unflushed air into about 1 m³ gives several hundred ppm (common practice row)', () => {
		const r = flushEstimate({ boxVolumeL: 1000, gloveVolumeL: 3, residualVolumeL: 0.3, cycles: 0 });
		expect(r.o2RiseInBoxPpm).toBeGreaterThan(500);
		expect(r.o2RiseInBoxPpm).toBeLessThan(700);
	});
});

describe('checkFlushInput', () => {
	const messages = (i: Parameters<typeof checkFlushInput>[0]) =>
		checkFlushInput(i).map((p) => `${p.field}: ${p.message}`);

	it('refuses impossible volumes and cycle counts', () => {
		expect(messages({ boxVolumeL: 0, gloveVolumeL: 1, residualVolumeL: 2, cycles: -1 })).toEqual([
			'boxVolumeL: boxVolumeL must be from 10 to 100000 L for a glove box',
			'residualVolumeL: residualVolumeL must be below gloveVolumeL',
			'cycles: cycles must be a whole number from 0 to 50'
		]);
		expect(
			checkFlushInput({ boxVolumeL: 800, gloveVolumeL: 2, residualVolumeL: 0.2, cycles: 5 })
		).toEqual([]);
	});

	it('refuses a glove larger than its box, and volumes that are no number or denormal', () => {
		expect(
			checkFlushInput({ boxVolumeL: 20, gloveVolumeL: 25, residualVolumeL: 1, cycles: 3 })
		).toEqual([
			{ field: 'gloveVolumeL', message: 'gloveVolumeL cannot be larger than the box (boxVolumeL)' }
		]);
		expect(
			checkFlushInput({ boxVolumeL: 20, gloveVolumeL: 20, residualVolumeL: 1, cycles: 3 })
		).toEqual([]);
		expect(
			messages({ boxVolumeL: Number.NaN, gloveVolumeL: 5e-324, residualVolumeL: -1, cycles: 3 })
		).toEqual([
			'boxVolumeL: boxVolumeL must be a number of litres',
			'gloveVolumeL: gloveVolumeL must be at least 0.01 L',
			'residualVolumeL: residualVolumeL cannot be negative'
		]);
	});

	it('every accepted input at the ends of its bounds gives finite numbers', () => {
		for (const boxVolumeL of [10, 100_000])
			for (const gloveVolumeL of [0.01, 10])
				for (const cycles of [0, 50]) {
					const input = { boxVolumeL, gloveVolumeL, residualVolumeL: gloveVolumeL / 2, cycles };
					expect(checkFlushInput(input)).toEqual([]);
					const r = flushEstimate(input);
					expect(Number.isFinite(r.o2InGlovePpm) && Number.isFinite(r.o2RiseInBoxPpm)).toBe(true);
				}
	});
});
