import { describe, expect, it } from 'vitest';
import {
	checkHumidityInput,
	frostPointFromPpmv,
	humidity,
	iceSaturationPressurePa,
	iceSaturationTemperatureApproxK,
	iceSaturationTemperatureK,
	ppmvFromFrostPoint
} from './humidity';

// Each row: frost point °C, e_i Pa, ppmv at 1 atm — REFERENCES.md "Water vapour", computed from
// Murphy & Koop (2005) eq. 7 and recomputed independently.
const table: [number, number, number][] = [
	[-20, 103.25, 1019.0],
	[-40, 12.844, 126.76],
	[-60, 1.0818, 10.676],
	[-70, 0.26186, 2.584],
	[-76, 0.1044, 1.03],
	[-80, 0.054808, 0.5409],
	[-90, 0.0096901, 0.09563]
];

const relative = (actual: number, expected: number) => Math.abs(actual / expected - 1);

describe('iceSaturationPressurePa (Murphy & Koop 2005, eq. 7)', () => {
	it.each(table)('frost point %d °C → e_i %f Pa (REFERENCES.md table)', (c, ei) => {
		// Five significant figures as tabulated: within 0.01 %.
		expect(relative(iceSaturationPressurePa(c + 273.15), ei)).toBeLessThan(1e-4);
	});

	it('ice at 240 K 27.272 Pa, at 210 K 0.70202 Pa, at 273.16 K 611.657 Pa (Murphy & Koop 2005 appendix; from memory, recomputed)', () => {
		expect(iceSaturationPressurePa(240)).toBeCloseTo(27.272, 3);
		expect(iceSaturationPressurePa(210)).toBeCloseTo(0.70202, 5);
		expect(iceSaturationPressurePa(273.16)).toBeCloseTo(611.657, 3);
	});
});

describe('iceSaturationTemperatureK (eq. 7 solved by Newton from eq. 8)', () => {
	it('round-trips eq. 7 from −120 °C to the triple point', () => {
		for (let c = -120; c <= 0.01; c += 0.25) {
			const t = c + 273.15;
			expect(Math.abs(iceSaturationTemperatureK(iceSaturationPressurePa(t)) - t)).toBeLessThan(
				1e-9
			);
		}
	});

	it('agrees with the closed-form eq. 8 to about 0.03 K (Murphy & Koop 2005, eq. 8)', () => {
		for (let c = -120; c <= 0.01; c += 0.25) {
			const p = iceSaturationPressurePa(c + 273.15);
			// 0.03 K as the paper states it; 0.031 allows for its rounding over this wider range.
			expect(
				Math.abs(iceSaturationTemperatureApproxK(p) - iceSaturationTemperatureK(p))
			).toBeLessThan(0.031);
		}
	});
});

describe('frost point ↔ ppmv at 1 atm (REFERENCES.md, ppmv = 10^6 e_i / P)', () => {
	it.each(table)('frost point %d °C → %f Pa → %f ppmv (REFERENCES.md table)', (c, _ei, ppmv) => {
		// Four significant figures as tabulated: within 0.05 %.
		expect(relative(ppmvFromFrostPoint(c), ppmv)).toBeLessThan(5e-4);
	});

	it('1 ppmv → −76.19 °C, 0.5 ppmv → −80.48 °C, 10 ppmv → −60.48 °C, ±0.05 K (REFERENCES.md, inverse)', () => {
		expect(Math.abs(frostPointFromPpmv(1) - -76.19)).toBeLessThan(0.05);
		expect(Math.abs(frostPointFromPpmv(0.5) - -80.48)).toBeLessThan(0.05);
		expect(Math.abs(frostPointFromPpmv(10) - -60.48)).toBeLessThan(0.05);
	});

	it('round-trips ppmv → frost point → ppmv', () => {
		for (const ppmv of [0.01, 0.1, 1, 5, 100, 5000])
			expect(relative(ppmvFromFrostPoint(frostPointFromPpmv(ppmv)), ppmv)).toBeLessThan(1e-12);
	});

	it('scales with the total pressure: the same water at half the pressure is twice the ppmv', () => {
		expect(ppmvFromFrostPoint(-60, 101_325 / 2)).toBeCloseTo(2 * ppmvFromFrostPoint(-60), 10);
		// A box 10 mbar above atmosphere: the frost point of 1 ppmv rises only slightly.
		expect(frostPointFromPpmv(1, 102_325)).toBeGreaterThan(frostPointFromPpmv(1));
	});

	it('humidity() answers both from either', () => {
		const a = humidity({ frostPointC: -76 });
		expect(a.frostPointC).toBe(-76);
		expect(a.ppmv).toBeCloseTo(1.03, 2);
		const b = humidity({ ppmv: 1, pressurePa: 101_325 });
		expect(b.ppmv).toBe(1);
		expect(b.frostPointC).toBeCloseTo(-76.19, 1);
	});
});

describe('checkHumidityInput', () => {
	it('accepts the usual range and refuses frost points outside −120 °C … 0.01 °C', () => {
		expect(checkHumidityInput({ frostPointC: -76 })).toEqual([]);
		expect(checkHumidityInput({ frostPointC: 0.01 })).toEqual([]);
		expect(checkHumidityInput({ frostPointC: -120 })).toEqual([]);
		expect(checkHumidityInput({ frostPointC: -121 })).toEqual([
			'frostPointC must be at or above -120 °C'
		]);
		expect(checkHumidityInput({ frostPointC: 5 })[0]).toMatch(/^frostPointC must be at or below/);
	});

	it('refuses ppmv at or below zero, or outside the frost-point range at that pressure', () => {
		expect(checkHumidityInput({ ppmv: 1 })).toEqual([]);
		expect(checkHumidityInput({ ppmv: 0 })).toEqual(['ppmv must be above zero']);
		expect(checkHumidityInput({ ppmv: -3 })).toEqual(['ppmv must be above zero']);
		expect(checkHumidityInput({ ppmv: 1e-6 })[0]).toMatch(/^ppmv must be at least/);
		// 0.01 °C over ice is 6036.6 ppmv at 1 atm.
		expect(checkHumidityInput({ ppmv: 6000 })).toEqual([]);
		expect(checkHumidityInput({ ppmv: 7000 })[0]).toMatch(/^ppmv must be at most 6037/);
	});

	it('refuses pressures at or below zero and above 10 bar, and an empty input', () => {
		expect(checkHumidityInput({ ppmv: 1, pressurePa: 0 })).toEqual([
			'pressurePa must be an absolute pressure above zero'
		]);
		expect(checkHumidityInput({ frostPointC: -70, pressurePa: 2e6 })[0]).toMatch(
			/^pressurePa is implausibly high/
		);
		expect(checkHumidityInput({})).toEqual(['frostPointC or ppmv is needed']);
	});
});
