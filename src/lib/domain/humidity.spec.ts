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
	const messages = (i: Parameters<typeof checkHumidityInput>[0]) =>
		checkHumidityInput(i).map((p) => `${p.field}: ${p.message}`);

	it('accepts the usual range and refuses frost points outside −120 °C … 0.01 °C', () => {
		expect(checkHumidityInput({ frostPointC: -76 })).toEqual([]);
		expect(checkHumidityInput({ frostPointC: 0.01 })).toEqual([]);
		expect(checkHumidityInput({ frostPointC: -120 })).toEqual([]);
		expect(checkHumidityInput({ frostPointC: -121 })).toEqual([
			{ field: 'frostPointC', message: 'frostPointC must be at or above -120 °C' }
		]);
		expect(checkHumidityInput({ frostPointC: 5 })[0].message).toMatch(
			/^frostPointC must be at or below/
		);
	});

	it('refuses ppmv at or below zero, or outside the frost-point range at that pressure', () => {
		expect(checkHumidityInput({ ppmv: 1 })).toEqual([]);
		expect(checkHumidityInput({ ppmv: 0 })).toEqual([
			{ field: 'ppmv', message: 'ppmv must be above zero' }
		]);
		expect(checkHumidityInput({ ppmv: -3 })).toEqual([
			{ field: 'ppmv', message: 'ppmv must be above zero' }
		]);
		expect(checkHumidityInput({ ppmv: 1e-6 })[0].message).toMatch(/^ppmv must be at least/);
		// 0.01 °C over ice is 6036.6 ppmv at 1 atm.
		expect(checkHumidityInput({ ppmv: 6000 })).toEqual([]);
		expect(checkHumidityInput({ ppmv: 7000 })[0].message).toMatch(/^ppmv must be at most 6037/);
	});

	it('refuses absolute pressures outside 1 kPa … 1 MPa, and an empty input', () => {
		expect(checkHumidityInput({ ppmv: 1, pressurePa: 0 })).toEqual([
			{
				field: 'pressurePa',
				message: 'pressurePa must be an absolute pressure from 1 kPa to 1 MPa (10 to 10 000 mbar)'
			}
		]);
		expect(messages({ frostPointC: -70, pressurePa: 2e6 })).toEqual([
			'pressurePa: pressurePa must be an absolute pressure from 1 kPa to 1 MPa (10 to 10 000 mbar)'
		]);
		expect(checkHumidityInput({ frostPointC: -70, pressurePa: 1000 })).toEqual([]);
		expect(checkHumidityInput({ frostPointC: -70, pressurePa: 1e6 })).toEqual([]);
		expect(checkHumidityInput({ frostPointC: -70, pressurePa: 999 })[0].field).toBe('pressurePa');
		expect(checkHumidityInput({})).toEqual([
			{ field: 'frostPointC', message: 'frostPointC or ppmv is needed' }
		]);
	});

	it('refuses a frost point whose vapour pressure is above the gas pressure (more than 100 % water)', () => {
		// Over ice at 0 °C, e_i = 611.15 Pa (Murphy & Koop 2005, eq. 7): above a 500 Pa gas.
		expect(ppmvFromFrostPoint(0, 500)).toBeGreaterThan(1e6);
		const problems = checkHumidityInput({ frostPointC: 0, pressurePa: 500 });
		expect(problems.map((p) => p.field)).toEqual(['pressurePa', 'frostPointC']);
		expect(problems[1].message).toMatch(/^frostPointC is impossible at this pressure/);
		// Within the pressure bounds the most water is 611.657 / 1000: 61 %, never over 100 %.
		expect(checkHumidityInput({ frostPointC: 0.01, pressurePa: 1000 })).toEqual([]);
		expect(humidity({ frostPointC: 0.01, pressurePa: 1000 }).ppmv).toBeCloseTo(611_657, -1);
	});

	it('every accepted input at the ends of its bounds gives finite numbers', () => {
		for (const pressurePa of [1000, 101_325, 1e6]) {
			for (const frostPointC of [-120, -76, 0.01]) {
				expect(checkHumidityInput({ frostPointC, pressurePa })).toEqual([]);
				const r = humidity({ frostPointC, pressurePa });
				expect(Number.isFinite(r.ppmv) && r.ppmv > 0).toBe(true);
			}
			for (const f of [-120, 0.01]) {
				const ppmv = ppmvFromFrostPoint(f, pressurePa);
				expect(checkHumidityInput({ ppmv, pressurePa })).toEqual([]);
				expect(humidity({ ppmv, pressurePa }).frostPointC).toBeCloseTo(f, 6);
			}
		}
	});
});
