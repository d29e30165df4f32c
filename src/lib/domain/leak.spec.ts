import { describe, expect, it } from 'vitest';
import { fieldMessages } from './inputs';
import {
	checkGaugeInput,
	checkLeakTest,
	checkOxygenInput,
	checkPressureInput,
	evaluateLeakTest,
	gasChangePerHour,
	isoClass,
	judgeLeakTest,
	leakFlowMbarLPerS,
	leakInputFromReadings,
	leakRateByOxygen,
	leakRateByPressure,
	meetsClass,
	pressureInputFromGauge,
	readingFieldOf,
	roundLeakRate,
	type IsoClass
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

// At each class limit: the class the limit's own wording gives (class 1 includes 5×10⁻⁴; 2.5×10⁻³,
// 10⁻² and 10⁻¹ each begin the next class up), whatever the floating-point noise of the inputs.
// Limits as restated by secondary sources (REFERENCES.md); ISO 10648-2's own table not seen.
describe('the class at each exact limit (ISO 10648-2:1994 limits, as restated by secondary sources)', () => {
	// Each limit with the class just below it, at it and just above it.
	const limits: [limit: number, below: IsoClass, at: IsoClass | null, above: IsoClass | null][] = [
		[5e-4, 1, 1, 2],
		[2.5e-3, 2, 3, 3],
		[1e-2, 3, 4, 4],
		[1e-1, 4, null, null]
	];

	it('the raw arithmetic lands on the wrong side of a limit, which is why rates are rounded', () => {
		// 400 ppm in 12 min is 1.0×10⁻² h⁻¹; 100 000 → 100 050 Pa in 1 h at 20 °C is 5×10⁻⁴ h⁻¹.
		expect(leakRateByOxygen({ o2RisePpm: 400, minutes: 12 })).toBeLessThan(1e-2);
		expect(
			leakRateByPressure({ p1Pa: 100_000, p2Pa: 100_050, t1K: 293.15, t2K: 293.15, hours: 1 })
		).toBeGreaterThan(5e-4);
		expect(roundLeakRate(0.009999999999999998)).toBe(1e-2);
		expect(roundLeakRate(5.000000000001092e-4)).toBe(5e-4);
	});

	// ΔC = Tf · 0.20 · Δt: each limit in 60 min and in 12 min (a fifth of an hour, not exact in binary).
	it.each([
		[100, 60, 5e-4, 1],
		[20, 12, 5e-4, 1],
		[500, 60, 2.5e-3, 3],
		[100, 12, 2.5e-3, 3],
		[2000, 60, 1e-2, 4],
		[400, 12, 1e-2, 4],
		[20_000, 60, 1e-1, null],
		[4000, 12, 1e-1, null]
	] as const)(
		'oxygen method: %d ppm in %d min is exactly %s h⁻¹, class %s',
		(o2RisePpm, minutes, limit, cls) => {
			const r = evaluateLeakTest({ method: 'oxygen', o2RisePpm, minutes });
			expect(r.hourlyLeakRate).toBe(limit);
			expect(r.isoClass).toBe(cls);
			expect(isoClass(leakRateByOxygen({ o2RisePpm, minutes }))).toBe(cls);
		}
	);

	// Δp = ±Tf · p₁ · Δt at constant temperature (ideal-gas form; the standard's own formula not
	// seen): gas in (a box below atmosphere) or out (above), 1 h or 12 min, at 20 °C.
	it.each([
		[100_000, 100_050, 1, 5e-4, 1],
		[100_000, 99_950, 1, 5e-4, 1],
		[100_000, 100_010, 0.2, 5e-4, 1],
		[100_000, 100_250, 1, 2.5e-3, 3],
		[100_000, 99_950, 0.2, 2.5e-3, 3],
		[100_000, 101_000, 1, 1e-2, 4],
		[100_000, 99_800, 0.2, 1e-2, 4],
		[100_000, 110_000, 1, 1e-1, null],
		[100_000, 98_000, 0.2, 1e-1, null]
	] as const)(
		'pressure method: %d → %d Pa over %s h at 20 °C is exactly %s h⁻¹, class %s',
		(p1Pa, p2Pa, hours, limit, cls) => {
			const input = { p1Pa, p2Pa, t1K: 293.15, t2K: 293.15, hours };
			const r = evaluateLeakTest({ method: 'pressure', ...input });
			expect(r.hourlyLeakRate).toBe(limit);
			expect(r.isoClass).toBe(cls);
			expect(isoClass(leakRateByPressure(input))).toBe(cls);
		}
	);

	it('every limit lands on its class across many durations, pressures and temperatures', () => {
		let checked = 0;
		for (const [limit, , cls] of limits) {
			for (const minutes of [1, 7, 12, 13, 45, 90, 100, 240, 600]) {
				const o2RisePpm = Number((limit * 0.2 * (minutes / 60) * 1e6).toPrecision(12));
				if (o2RisePpm >= 209_460) continue;
				const r = evaluateLeakTest({ method: 'oxygen', o2RisePpm, minutes });
				expect([r.hourlyLeakRate, r.isoClass], `${o2RisePpm} ppm in ${minutes} min`).toEqual([
					limit,
					cls
				]);
				checked++;
			}
			for (const p1Pa of [50_000, 99_000, 101_325, 102_000, 200_000])
				for (const tK of [273.15, 293.15, 296.4])
					for (const hours of [0.25, 2.5, 24])
						for (const sign of [1, -1]) {
							const p2Pa = Number((p1Pa * (1 + sign * limit * hours)).toPrecision(12));
							const input = { method: 'pressure' as const, p1Pa, p2Pa, t1K: tK, t2K: tK, hours };
							if (checkLeakTest(input).length) continue;
							const r = evaluateLeakTest(input);
							expect(
								[r.hourlyLeakRate, r.isoClass],
								`${p1Pa} → ${p2Pa} Pa, ${tK} K, ${hours} h`
							).toEqual([limit, cls]);
							checked++;
						}
		}
		expect(checked).toBeGreaterThan(300);
	});

	it('gauge readings at the class 1 limit: −10 → −9.505 mbar gauge under 1000 mbar in 60 min is 5×10⁻⁴, class 1', () => {
		const r = evaluateLeakTest(
			leakInputFromReadings('gauge', {
				gauge1Mbar: -10,
				gauge2Mbar: -9.505,
				baro1Mbar: 1000,
				baro2Mbar: 1000,
				t1C: 20,
				t2C: 20,
				minutes: 60
			})
		);
		// 99 000 → 99 049.5 Pa: 49.5 / 99 000 = 5×10⁻⁴.
		expect(r).toMatchObject({ method: 'pressure', hourlyLeakRate: 5e-4, isoClass: 1 });
	});

	it('a rate one part in 10⁵ either side of a limit stays on its own side of it', () => {
		for (const [limit, below, , above] of limits) {
			expect(isoClass(limit * (1 - 1e-5))).toBe(below);
			expect(isoClass(limit * (1 + 1e-5))).toBe(above);
		}
	});
});

describe('judgeLeakTest (pass or fail against the box’s class)', () => {
	it('class 1 at its limit passes class 1; 10⁻² fails class 3 and passes class 4', () => {
		expect(judgeLeakTest({ method: 'oxygen', o2RisePpm: 100, minutes: 60 }, 1)).toMatchObject({
			isoClass: 1,
			requiredClass: 1,
			passed: true
		});
		const leaky = { method: 'oxygen' as const, o2RisePpm: 400, minutes: 12 };
		expect(judgeLeakTest(leaky, 3).passed).toBe(false);
		expect(judgeLeakTest(leaky, 4).passed).toBe(true);
	});

	it('keeps the inputs in SI units, gauge readings beside their sums, and the direction of the gas', () => {
		const r = evaluateLeakTest({
			method: 'gauge',
			gauge1Pa: -1000,
			gauge2Pa: -950,
			barometric1Pa: 101_325,
			barometric2Pa: 101_325,
			t1K: 293.15,
			t2K: 293.15,
			hours: 1
		});
		expect(r.inputs).toEqual({
			p1Pa: 100_325,
			p2Pa: 100_375,
			t1K: 293.15,
			t2K: 293.15,
			hours: 1,
			gauge1Pa: -1000,
			gauge2Pa: -950,
			barometric1Pa: 101_325,
			barometric2Pa: 101_325
		});
		expect(r.gasChangePerHour).toBeGreaterThan(0);
		expect(r.hourlyLeakRate).toBe(4.9838e-4);
	});
});

describe('readings in mbar, °C and minutes (the leak-test form and the /calc page)', () => {
	it('convert once: mbar × 100 = Pa, °C + 273.15 = K, minutes / 60 = h', () => {
		const readings = {
			gauge1Mbar: -10,
			gauge2Mbar: -9.5,
			baro1Mbar: 1013.25,
			baro2Mbar: 1013,
			p1Mbar: 1003.25,
			p2Mbar: 1003.75,
			t1C: 20,
			t2C: 21,
			minutes: 90,
			o2RisePpm: 12
		};
		expect(leakInputFromReadings('gauge', readings)).toEqual({
			method: 'gauge',
			gauge1Pa: -1000,
			gauge2Pa: -950,
			barometric1Pa: 101_325,
			barometric2Pa: 101_300,
			t1K: 293.15,
			t2K: 294.15,
			hours: 1.5
		});
		expect(leakInputFromReadings('absolute', readings)).toEqual({
			method: 'pressure',
			p1Pa: 100_325,
			p2Pa: 100_375,
			t1K: 293.15,
			t2K: 294.15,
			hours: 1.5
		});
		expect(leakInputFromReadings('oxygen', readings)).toEqual({
			method: 'oxygen',
			o2RisePpm: 12,
			minutes: 90
		});
	});

	it('a missing reading is refused by name, beside the input it came from', () => {
		const input = leakInputFromReadings('gauge', { gauge1Mbar: -10, minutes: 60 });
		const fields = fieldMessages(checkLeakTest(input), readingFieldOf('gauge'));
		expect(Object.keys(fields).sort()).toEqual([
			'baro1Mbar',
			'baro2Mbar',
			'gauge2Mbar',
			't1C',
			't2C'
		]);
		expect(fields.t1C).toBe('t1K must be a number');
		const absolute = fieldMessages(
			checkLeakTest(
				leakInputFromReadings('absolute', {
					p1Mbar: 5,
					p2Mbar: 1000,
					t1C: 20,
					t2C: 20,
					minutes: 0.5
				})
			),
			readingFieldOf('absolute')
		);
		expect(absolute).toEqual({
			p1Mbar: 'p1Pa must be an absolute pressure from 1 kPa to 1 MPa (10 to 10 000 mbar)',
			minutes: 'hours must be at least 1 minute (1/60 h)'
		});
	});
});

describe('input checks', () => {
	it('oxygen: refuses a negative rise, no time and under a minute', () => {
		expect(checkOxygenInput({ o2RisePpm: 100, minutes: 60 })).toEqual([]);
		expect(checkOxygenInput({ o2RisePpm: 0, minutes: 60 })).toEqual([]);
		expect(checkOxygenInput({ o2RisePpm: -1, minutes: 0 })).toEqual([
			{
				field: 'o2RisePpm',
				message: 'o2RisePpm cannot be negative (a falling O2 means the purifier was still on)'
			},
			{ field: 'minutes', message: 'minutes must be at least 1' }
		]);
		expect(checkOxygenInput({ o2RisePpm: 300_000, minutes: 60 })[0].message).toMatch(
			/^o2RisePpm must be below/
		);
		expect(checkOxygenInput({ o2RisePpm: 10, minutes: 5e-324 })).toEqual([
			{ field: 'minutes', message: 'minutes must be at least 1' }
		]);
		expect(checkOxygenInput({ o2RisePpm: Number.NaN, minutes: 1e6 })).toEqual([
			{ field: 'o2RisePpm', message: 'o2RisePpm must be a number' },
			{ field: 'minutes', message: 'minutes is implausibly long for a leak test (over 168 h)' }
		]);
	});

	it('pressure: refuses absolute pressures outside 1 kPa–1 MPa, temperatures at or below 0 K or given in °C, and no time', () => {
		expect(
			checkPressureInput({ p1Pa: 100_325, p2Pa: 100_375, t1K: 293, t2K: 293, hours: 1 })
		).toEqual([]);
		expect(checkPressureInput({ p1Pa: -1000, p2Pa: 0, t1K: 0, t2K: 20, hours: 0 })).toEqual([
			{
				field: 'p1Pa',
				message: 'p1Pa must be an absolute pressure from 1 kPa to 1 MPa (10 to 10 000 mbar)'
			},
			{
				field: 'p2Pa',
				message: 'p2Pa must be an absolute pressure from 1 kPa to 1 MPa (10 to 10 000 mbar)'
			},
			{ field: 't1K', message: 't1K must be above 0 K (−273.15 °C)' },
			{ field: 't2K', message: 't2K must be between 200 and 400 K (−73 to 127 °C)' },
			{ field: 'hours', message: 'hours must be at least 1 minute (1/60 h)' }
		]);
		expect(checkPressureInput({ p1Pa: 2e6, p2Pa: 999, t1K: 293, t2K: 293, hours: 500 })).toEqual([
			{
				field: 'p1Pa',
				message: 'p1Pa must be an absolute pressure from 1 kPa to 1 MPa (10 to 10 000 mbar)'
			},
			{
				field: 'p2Pa',
				message: 'p2Pa must be an absolute pressure from 1 kPa to 1 MPa (10 to 10 000 mbar)'
			},
			{ field: 'hours', message: 'hours is implausibly long for a leak test (over 168 h)' }
		]);
		// The bounds themselves are in.
		expect(
			checkPressureInput({ p1Pa: 1000, p2Pa: 1e6, t1K: 200, t2K: 400, hours: 1 / 60 })
		).toEqual([]);
		// A denormal duration would make the rate infinite.
		expect(checkPressureInput({ p1Pa: 1e5, p2Pa: 1e5, t1K: 293, t2K: 293, hours: 5e-324 })).toEqual(
			[{ field: 'hours', message: 'hours must be at least 1 minute (1/60 h)' }]
		);
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
			{
				field: 'gauge1Pa',
				message: 'gauge1Pa is implausible for a glove box (beyond ±10000 Pa, 100 mbar)'
			},
			{
				field: 'barometric2Pa',
				message: 'barometric2Pa must be between 50000 and 115000 Pa (500–1150 mbar)'
			}
		]);
	});

	it('every accepted input gives a finite rate, at the ends of every bound', () => {
		for (const minutes of [1, 168 * 60])
			for (const o2RisePpm of [0, 209_459.999])
				expect(
					Number.isFinite(evaluateLeakTest({ method: 'oxygen', o2RisePpm, minutes }).hourlyLeakRate)
				).toBe(true);
		for (const [p1Pa, p2Pa] of [
			[1000, 1e6],
			[1e6, 1000]
		])
			for (const [t1K, t2K] of [
				[200, 400],
				[400, 200]
			])
				for (const hours of [1 / 60, 168]) {
					const input = { method: 'pressure' as const, p1Pa, p2Pa, t1K, t2K, hours };
					expect(checkLeakTest(input)).toEqual([]);
					expect(Number.isFinite(evaluateLeakTest(input).hourlyLeakRate)).toBe(true);
				}
	});
});
