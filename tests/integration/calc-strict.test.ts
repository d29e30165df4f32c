// The /api/calc/* routes held to the contract: strict bodies (an unknown field is refused by
// name), physical bounds refused by field, finite numbers for every accepted input, and the
// ISO 10648-2 class at an exact class limit (limits as restated by secondary sources,
// REFERENCES.md; the standard's own table not seen) decided by the limit, not by rounding error.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeTestDb, makeBox, makeUser } from '../support/db';
import { type Client, errorOf, signedIn } from '../support/http';

afterAll(closeTestDb);

let c: Client;
beforeAll(async () => {
	c = await signedIn(await makeUser('member'));
});

/** A 400 in the contract's shape whose details.fields name exactly `fields`. */
async function refused(path: string, body: unknown, fields: string[]) {
	const r = await c.post(path, body);
	expect(r.status, `${path} ${JSON.stringify(body)}`).toBe(400);
	const error = await errorOf(r);
	expect(error.code).toBe('invalid_input');
	const named = error.details?.fields as Record<string, string>;
	expect(Object.keys(named).sort(), JSON.stringify(body)).toEqual([...fields].sort());
	for (const f of fields) expect(typeof named[f]).toBe('string');
	return named;
}

/** A 200 whose every number is finite; `nullable` fields may be null, as the contract says. */
async function answered(path: string, body: unknown, nullable: string[] = []) {
	const r = await c.post(path, body);
	expect(r.status, `${path} ${JSON.stringify(body)}`).toBe(200);
	const json = (await r.json()) as Record<string, unknown>;
	for (const [key, value] of Object.entries(json)) {
		if (value === null && nullable.includes(key)) continue;
		expect(Number.isFinite(value), `${key} of ${JSON.stringify(body)}: ${value}`).toBe(true);
	}
	return json;
}

const oxygen = (o2RisePpm: number, minutes: number) => ({ method: 'oxygen', o2RisePpm, minutes });
const pressure = (p1Pa: number, p2Pa: number, hours = 1, tK = 293.15) => ({
	method: 'pressure',
	p1Pa,
	p2Pa,
	t1K: tK,
	t2K: tK,
	hours
});
const flush = { boxVolumeL: 1000, gloveVolumeL: 2, residualVolumeL: 0.2, cycles: 5 };

describe('unknown fields are refused by name on every /api/calc route', () => {
	it.each([
		['/api/calc/humidity', { frostPointC: -40, pressure: 90_000 }, ['pressure']],
		['/api/calc/antechamber', { lowPa: 100, highPa: 101_325, speed: 10 }, ['speed']],
		['/api/calc/flush', { ...flush, boxVolume: 1000 }, ['boxVolume']],
		['/api/calc/leak-rate', { ...oxygen(100, 60), note: 'x' }, ['note']],
		['/api/calc/leak-rate', { ...pressure(100_000, 100_050), p1: 1, p2: 2 }, ['p1', 'p2']]
	])('%s %j', async (path, body, fields) => {
		await refused(path, body, fields);
	});

	it('an unknown field and a bad one are both named', async () => {
		await refused('/api/calc/humidity', { frostPointC: 'cold', pressure: 1 }, [
			'frostPointC',
			'pressure'
		]);
	});

	it('a recorded leak test is as strict', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const r = await manager.post(`/api/boxes/${boxId}/leak-tests`, {
			...oxygen(10, 60),
			tester: 'me'
		});
		expect(r.status).toBe(400);
		const error = await errorOf(r);
		expect(error.code).toBe('invalid_input');
		expect(Object.keys(error.details?.fields as object)).toEqual(['tester']);
	});

	it('malformed JSON is a 400 in the same shape', async () => {
		const r = await c.request('POST', '/api/calc/humidity', '{"frostPointC": -40,');
		expect(r.status).toBe(400);
		expect((await errorOf(r)).code).toBe('invalid_input');
	});
});

describe('the ISO 10648-2 class at each exact limit (limits as restated by secondary sources)', () => {
	// Oxygen method, Tf = ΔC / (0.20 · Δt): 12 minutes is a fifth of an hour, inexact in binary.
	it.each([
		[20, 12, 5e-4, 1],
		[100, 60, 5e-4, 1],
		[100, 12, 2.5e-3, 3],
		[400, 12, 1e-2, 4],
		[4000, 12, 1e-1, null]
	])('oxygen: %d ppm in %d min → %s h⁻¹, class %s', async (ppm, minutes, rate, cls) => {
		const r = await answered('/api/calc/leak-rate', oxygen(ppm, minutes), ['isoClass']);
		expect(r).toEqual({ hourlyLeakRate: rate, isoClass: cls });
	});

	// Pressure-change method, ideal-gas form (the standard's own formula not seen), at 20 °C.
	it.each([
		[100_000, 100_050, 1, 5e-4, 1],
		[100_000, 99_950, 1, 5e-4, 1],
		[100_000, 100_250, 1, 2.5e-3, 3],
		[100_000, 101_000, 1, 1e-2, 4],
		[100_000, 99_800, 0.2, 1e-2, 4],
		[100_000, 110_000, 1, 1e-1, null]
	])('pressure: %d → %d Pa over %s h → %s h⁻¹, class %s', async (p1, p2, hours, rate, cls) => {
		const r = await answered('/api/calc/leak-rate', pressure(p1, p2, hours), ['isoClass']);
		expect(r).toEqual({ hourlyLeakRate: rate, isoClass: cls });
	});

	it('a recorded test at a limit is judged by the same class', async () => {
		const boxId = await makeBox({ requiredLeakClass: 3 });
		const manager = await signedIn(await makeUser('manager'));
		const r = await manager.post(`/api/boxes/${boxId}/leak-tests`, oxygen(400, 12));
		expect(r.status).toBe(201);
		expect((await r.json()).leakTest).toMatchObject({
			hourlyLeakRate: 1e-2,
			isoClass: 4,
			requiredClass: 3,
			passed: false
		});
	});
});

describe('physical bounds, each refused beside its field', () => {
	it('absolute pressures from 1 kPa to 1 MPa', async () => {
		await refused('/api/calc/humidity', { frostPointC: -70, pressurePa: 999 }, ['pressurePa']);
		await refused('/api/calc/humidity', { ppmv: 1, pressurePa: 1_000_001 }, ['pressurePa']);
		await answered('/api/calc/humidity', { frostPointC: -70, pressurePa: 1000 });
		await answered('/api/calc/humidity', { frostPointC: -70, pressurePa: 1e6 });
		await refused('/api/calc/antechamber', { lowPa: 100, highPa: 2e6 }, ['highPa']);
		await refused('/api/calc/antechamber', { lowPa: 100, highPa: 500 }, ['highPa']);
		await refused('/api/calc/leak-rate', pressure(500, 100_000), ['p1Pa']);
		await refused('/api/calc/leak-rate', pressure(100_000, 5e6), ['p2Pa']);
	});

	it('a frost point that would be more than 100 % water at its pressure', async () => {
		// Ice at 0 °C holds 611 Pa of water (Murphy & Koop 2005): more than a 500 Pa gas.
		const fields = await refused('/api/calc/humidity', { frostPointC: 0, pressurePa: 500 }, [
			'frostPointC',
			'pressurePa'
		]);
		expect(fields.frostPointC).toMatch(/100 % water/);
	});

	it('durations positive and bounded: no denormal minutes or hours, no year-long test', async () => {
		await refused('/api/calc/leak-rate', oxygen(10, 5e-324), ['minutes']);
		await refused('/api/calc/leak-rate', oxygen(10, 0.5), ['minutes']);
		await refused('/api/calc/leak-rate', oxygen(10, 1e6), ['minutes']);
		await refused('/api/calc/leak-rate', pressure(100_000, 100_050, 5e-324), ['hours']);
		await refused('/api/calc/leak-rate', pressure(100_000, 100_050, -1), ['hours']);
		await refused('/api/calc/leak-rate', pressure(100_000, 100_050, 10_000), ['hours']);
	});

	it('pump speed and chamber volume positive and sensible, evacuation above 0.1 Pa', async () => {
		const base = { lowPa: 100, highPa: 101_325 };
		await refused('/api/calc/antechamber', { ...base, volumeL: 40, pumpM3PerH: 0 }, ['pumpM3PerH']);
		await refused('/api/calc/antechamber', { ...base, volumeL: 40, pumpM3PerH: 5e-324 }, [
			'pumpM3PerH'
		]);
		await refused('/api/calc/antechamber', { ...base, volumeL: 40, pumpM3PerH: 1e9 }, [
			'pumpM3PerH'
		]);
		await refused('/api/calc/antechamber', { ...base, volumeL: -40, pumpM3PerH: 10 }, ['volumeL']);
		await refused('/api/calc/antechamber', { lowPa: 5e-324, highPa: 101_325 }, ['lowPa']);
		await refused('/api/calc/antechamber', { ...base, cycles: 1.5 }, ['cycles']);
	});

	it('volumes positive, and a glove no larger than its box', async () => {
		await refused('/api/calc/flush', { ...flush, boxVolumeL: 0 }, ['boxVolumeL']);
		await refused('/api/calc/flush', { ...flush, gloveVolumeL: 5e-324 }, ['gloveVolumeL']);
		await refused('/api/calc/flush', { ...flush, boxVolumeL: 20, gloveVolumeL: 25 }, [
			'gloveVolumeL'
		]);
		await refused('/api/calc/flush', { ...flush, residualVolumeL: -0.1 }, ['residualVolumeL']);
		await answered('/api/calc/flush', { ...flush, boxVolumeL: 20, gloveVolumeL: 20 });
	});
});

describe('every accepted input at the edges of its bounds answers finite numbers', () => {
	it('humidity', async () => {
		for (const pressurePa of [1000, 101_325, 1e6])
			for (const frostPointC of [-120, 0.01]) {
				const r = await answered('/api/calc/humidity', { frostPointC, pressurePa });
				await answered('/api/calc/humidity', { ppmv: r.ppmv, pressurePa });
			}
	});

	it('antechamber', async () => {
		for (const [lowPa, highPa] of [
			[0.1, 1e6],
			[999.9, 1000]
		])
			for (const [volumeL, pumpM3PerH] of [
				[0.1, 1000],
				[10_000, 0.1]
			])
				await answered('/api/calc/antechamber', { lowPa, highPa, cycles: 50, volumeL, pumpM3PerH });
		await answered('/api/calc/antechamber', { lowPa: 0.1, highPa: 1e6, targetPpm: 1e-6 });
	});

	it('flush', async () => {
		for (const boxVolumeL of [10, 100_000])
			for (const cycles of [0, 50])
				await answered('/api/calc/flush', {
					boxVolumeL,
					gloveVolumeL: 0.01,
					residualVolumeL: 0,
					cycles
				});
	});

	it('leak rate', async () => {
		for (const minutes of [1, 168 * 60])
			await answered('/api/calc/leak-rate', oxygen(209_459, minutes), ['isoClass']);
		for (const [p1, p2] of [
			[1000, 1e6],
			[1e6, 1000]
		])
			for (const hours of [1 / 60, 168])
				await answered('/api/calc/leak-rate', pressure(p1, p2, hours), ['isoClass']);
	});
});
