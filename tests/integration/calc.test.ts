// The /api/calc/* routes of DESIGN.md, checked against REFERENCES.md values.
import { afterAll, describe, expect, it } from 'vitest';
import { closeTestDb, makeUser } from '../support/db';
import { Client, errorOf, signedIn } from '../support/http';

afterAll(closeTestDb);

const client = async () => signedIn(await makeUser('member'));

describe('POST /api/calc/humidity', () => {
	it('converts frost point to ppmv and back (Murphy & Koop 2005, eq. 7)', async () => {
		const c = await client();
		const fromFrost = await (await c.post('/api/calc/humidity', { frostPointC: -60 })).json();
		expect(fromFrost.ppmv).toBeCloseTo(10.676, 2); // REFERENCES.md table, 1 atm
		const fromPpm = await (await c.post('/api/calc/humidity', { ppmv: 1 })).json();
		expect(fromPpm.frostPointC).toBeCloseTo(-76.19, 1); // REFERENCES.md inverse, ±0.05 K
		// At half an atmosphere the same frost point is twice the ppmv.
		const half = await (
			await c.post('/api/calc/humidity', { frostPointC: -60, pressurePa: 50_662.5 })
		).json();
		expect(half.ppmv).toBeCloseTo(2 * 10.676, 1);
	});
	it('refuses frost points below −120 °C, negative pressures and no input', async () => {
		const c = await client();
		for (const body of [{ frostPointC: -130 }, { ppmv: 1, pressurePa: -5 }, {}]) {
			const r = await c.post('/api/calc/humidity', body);
			expect(r.status).toBe(400);
			expect((await errorOf(r)).code).toBe('invalid_input');
		}
	});
});

describe('POST /api/calc/antechamber', () => {
	it('gives the residual fraction, cycles for a target and the pump-down time', async () => {
		const c = await client();
		// Crowl & Louvar ch. 7: 20 mmHg / 760 mmHg, 0.21 → 1 ppm needs 3.37 → 4 cycles (REFERENCES uses 0.20946).
		const r = await (
			await c.post('/api/calc/antechamber', {
				lowPa: 2666.45,
				highPa: 101_325,
				cycles: 3,
				targetPpm: 1,
				volumeL: 40,
				pumpM3PerH: 10
			})
		).json();
		expect(r.residualFraction).toBeCloseTo((20 / 760) ** 3, 8);
		expect(r.cyclesForTarget).toBe(4);
		// Ryans & Roper (from memory): 40 L, 10 m³/h, 1013 → 1 mbar ≈ 99.7 s; here 26.66 mbar.
		expect(r.pumpDownSeconds).toBeCloseTo(14.4 * Math.log(101_325 / 2666.45), 1);
	});
	it('refuses a low pressure at or above the high one, and negatives', async () => {
		const c = await client();
		for (const body of [
			{ lowPa: 200_000, highPa: 101_325 },
			{ lowPa: -1, highPa: 101_325 }
		]) {
			expect((await c.post('/api/calc/antechamber', body)).status).toBe(400);
		}
	});
});

describe('POST /api/calc/leak-rate', () => {
	it('works out the hourly leak rate and ISO 10648-2 class by both methods', async () => {
		const c = await client();
		// REFERENCES.md: 200 ppm in 60 min → 1.0×10⁻³ h⁻¹, class 2.
		const oxygen = await (
			await c.post('/api/calc/leak-rate', { method: 'oxygen', o2RisePpm: 200, minutes: 60 })
		).json();
		expect(oxygen.hourlyLeakRate).toBeCloseTo(1e-3, 8);
		expect(oxygen.isoClass).toBe(2);
		// −1000 → −950 Pa gauge in 1 h at constant T and barometric pressure → 4.98×10⁻⁴, class 1.
		const pressure = await (
			await c.post('/api/calc/leak-rate', {
				method: 'pressure',
				p1Pa: 101_325 - 1000,
				p2Pa: 101_325 - 950,
				t1K: 293.15,
				t2K: 293.15,
				hours: 1
			})
		).json();
		expect(pressure.hourlyLeakRate).toBeCloseTo(4.98e-4, 5);
		expect(pressure.isoClass).toBe(1);
		const leaky = await (
			await c.post('/api/calc/leak-rate', { method: 'oxygen', o2RisePpm: 30_000, minutes: 60 })
		).json();
		expect(leaky.isoClass).toBeNull();
	});
	it('refuses negative absolute pressures, zero hours and an unknown method', async () => {
		const c = await client();
		const bodies = [
			{ method: 'pressure', p1Pa: -100, p2Pa: 100, t1K: 293, t2K: 293, hours: 1 },
			{ method: 'pressure', p1Pa: 100_000, p2Pa: 100_100, t1K: 293, t2K: 293, hours: 0 },
			{ method: 'helium', o2RisePpm: 1, minutes: 1 }
		];
		for (const body of bodies) expect((await c.post('/api/calc/leak-rate', body)).status).toBe(400);
		expect((await new Client().post('/api/calc/leak-rate', bodies[0])).status).toBe(401);
	});
});
