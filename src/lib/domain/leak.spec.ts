import { describe, expect, it } from 'vitest';
import {
	checkGaugeInput,
	checkOxygenInput,
	checkPressureInput,
	gasChangePerHour,
	isoClass,
	leakFlowMbarLPerS,
	leakRateByOxygen,
	leakRateByPressure,
	meetsClass,
	pressureInputFromGauge
} from './leak';

// The ISO 10648-2 class limits are as restated by several secondary sources (REFERENCES.md);
// the standard's own table was not seen.
describe('isoClass (ISO 10648-2:1994, limits from secondary sources)', () => {
	it('class 1 ≤ 5×10⁻⁴ h⁻¹, including the limit', () => {
		expect(isoClass(0)).toBe(1);
		expect(isoClass(5e-4)).toBe(1);
		expect(isoClass(5.0001e-4)).toBe(2);
	});

	it('class 2 < 2.5×10⁻³, class 3 < 10⁻², class 4 < 10⁻¹, each excluding its limit; above, none', () => {
		expect(isoClass(2.4999e-3)).toBe(2);
		expect(isoClass(2.5e-3)).toBe(3);
		expect(isoClass(9.999e-3)).toBe(3);
		expect(isoClass(1e-2)).toBe(4);
		expect(isoClass(0.0999)).toBe(4);
		expect(isoClass(0.1)).toBeNull();
		expect(isoClass(Number.NaN)).toBeNull();
	});

	it('meetsClass: a tighter class passes a looser requirement, not the other way', () => {
		expect(meetsClass(4e-4, 1)).toBe(true);
		expect(meetsClass(4e-4, 3)).toBe(true);
		expect(meetsClass(1e-3, 1)).toBe(false);
		expect(meetsClass(1e-3, 2)).toBe(true);
		expect(meetsClass(0.5, 4)).toBe(false);
	});
});

describe('leakRateByOxygen (ISO 10648-2 oxygen method, Tf = ΔC / (0.20 · Δt); as restated by secondary sources)', () => {
	it('100 ppm in 60 min → 5.0×10⁻⁴ h⁻¹, the class 1 limit (REFERENCES.md)', () => {
		const tf = leakRateByOxygen({ o2RisePpm: 100, minutes: 60 });
		expect(tf).toBeCloseTo(5e-4, 12);
		expect(isoClass(tf)).toBe(1);
	});

	it('30 ppm in 90 min → 1.0×10⁻⁴ h⁻¹ (REFERENCES.md)', () => {
		expect(leakRateByOxygen({ o2RisePpm: 30, minutes: 90 })).toBeCloseTo(1e-4, 12);
	});

	it('200 ppm in 60 min → 1.0×10⁻³ h⁻¹, class 2 (REFERENCES.md)', () => {
		const tf = leakRateByOxygen({ o2RisePpm: 200, minutes: 60 });
		expect(tf).toBeCloseTo(1e-3, 12);
		expect(isoClass(tf)).toBe(2);
	});
});

// The pressure-change method is the ideal-gas form of REFERENCES.md: the standard's own formula
// was not seen.
describe('leakRateByPressure (ideal-gas form; ISO 10648-2’s own formula not seen)', () => {
	it('−1000 → −950 Pa gauge in 1 h at constant temperature and barometric pressure → 4.98×10⁻⁴ h⁻¹ (REFERENCES.md)', () => {
		const input = pressureInputFromGauge({
			gauge1Pa: -1000,
			gauge2Pa: -950,
			barometric1Pa: 101_325,
			barometric2Pa: 101_325,
			t1K: 293.15,
			t2K: 293.15,
			hours: 1
		});
		expect(input.p1Pa).toBe(100_325);
		expect(input.p2Pa).toBe(100_375);
		const tf = leakRateByPressure(input);
		expect(tf).toBeCloseTo(50 / 100_325, 12);
		expect(tf).toBeCloseTo(4.98e-4, 6); // within 5×10⁻⁷: 4.98, not the 5.0 of the limit
		expect(isoClass(tf)).toBe(1);
	});

	it('sign: a box below atmosphere gains gas (positive), one above loses it (negative); Tf is the magnitude', () => {
		const under = { p1Pa: 100_325, p2Pa: 100_375, t1K: 293, t2K: 293, hours: 1 };
		const over = { p1Pa: 102_325, p2Pa: 102_275, t1K: 293, t2K: 293, hours: 1 };
		expect(gasChangePerHour(under)).toBeGreaterThan(0);
		expect(gasChangePerHour(over)).toBeLessThan(0);
		expect(leakRateByPressure(over)).toBeCloseTo(50 / 102_325, 12);
	});

	it('a 0.1 K drift is worth ≈ 35 Pa at 293 K, so the temperature correction matters at class 1 (REFERENCES.md)', () => {
		// Warming by 0.1 K with no leak raises the pressure by p·0.1/293 ≈ 34.6 Pa …
		const p1 = 101_325;
		const p2 = (p1 * 293.1) / 293;
		expect(p2 - p1).toBeCloseTo(34.6, 1);
		// … which the correction cancels exactly,
		expect(leakRateByPressure({ p1Pa: p1, p2Pa: p2, t1K: 293, t2K: 293.1, hours: 1 })).toBeCloseTo(
			0,
			12
		);
		// and which, left uncorrected, reads as 3.4×10⁻⁴ h⁻¹: most of class 1's allowance.
		expect(leakRateByPressure({ p1Pa: p1, p2Pa: p2, t1K: 293, t2K: 293, hours: 1 })).toBeCloseTo(
			3.41e-4,
			6
		);
	});

	it('corrects for the barometer: the same gauge readings under a falling barometer are a smaller gain', () => {
		const base = { gauge1Pa: -1000, gauge2Pa: -950, t1K: 293, t2K: 293, hours: 1 };
		const steady = leakRateByPressure(
			pressureInputFromGauge({ ...base, barometric1Pa: 101_325, barometric2Pa: 101_325 })
		);
		const falling = leakRateByPressure(
			pressureInputFromGauge({ ...base, barometric1Pa: 101_325, barometric2Pa: 101_300 })
		);
		expect(falling).toBeCloseTo(25 / 100_325, 12);
		expect(falling).toBeLessThan(steady);
	});
});

describe('leakFlowMbarLPerS (Q = Tf · V · p / 3600)', () => {
	it('Tf 5×10⁻⁴, V 1000 L, p 1013 mbar → 0.141 mbar·L/s (REFERENCES.md)', () => {
		expect(leakFlowMbarLPerS(5e-4, 1000, 1013)).toBeCloseTo(0.141, 3);
	});
});

describe('input checks', () => {
	it('oxygen: refuses a negative rise and no time', () => {
		expect(checkOxygenInput({ o2RisePpm: 100, minutes: 60 })).toEqual([]);
		expect(checkOxygenInput({ o2RisePpm: 0, minutes: 60 })).toEqual([]);
		expect(checkOxygenInput({ o2RisePpm: -1, minutes: 0 })).toEqual([
			'o2RisePpm cannot be negative (a falling O2 means the purifier was still on)',
			'minutes must be above zero'
		]);
		expect(checkOxygenInput({ o2RisePpm: 300_000, minutes: 60 })[0]).toMatch(
			/^o2RisePpm must be below/
		);
	});

	it('pressure: refuses negative absolute pressures, temperatures at or below 0 K or given in °C, and no time', () => {
		expect(
			checkPressureInput({ p1Pa: 100_325, p2Pa: 100_375, t1K: 293, t2K: 293, hours: 1 })
		).toEqual([]);
		expect(checkPressureInput({ p1Pa: -1000, p2Pa: 0, t1K: 0, t2K: 20, hours: 0 })).toEqual([
			'p1Pa must be an absolute pressure above zero (gauge plus barometric)',
			'p2Pa must be an absolute pressure above zero (gauge plus barometric)',
			't1K must be above 0 K',
			't2K must be between 200 and 400 K (−73 to 127 °C)',
			'hours must be above zero'
		]);
		expect(
			checkPressureInput({ p1Pa: 2e6, p2Pa: 100_000, t1K: 293, t2K: 293, hours: 500 })
		).toEqual([
			'p1Pa is implausibly high (above 1 000 000 Pa, 10 bar)',
			'hours is implausibly long for a leak test (over 168 h)'
		]);
	});

	it('gauge: refuses an implausible gauge or barometer reading', () => {
		const ok = {
			gauge1Pa: -1000,
			gauge2Pa: -950,
			barometric1Pa: 101_325,
			barometric2Pa: 101_300,
			t1K: 293,
			t2K: 293,
			hours: 1
		};
		expect(checkGaugeInput(ok)).toEqual([]);
		expect(checkGaugeInput({ ...ok, gauge1Pa: -50_000, barometric2Pa: 1013 })).toEqual([
			'gauge1Pa is implausible for a glove box (beyond ±10000 Pa, 100 mbar)',
			'barometric2Pa must be between 50000 and 115000 Pa (500–1150 mbar)'
		]);
	});
});
