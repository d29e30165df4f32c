import { afterAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { gloveChanges, leakTests } from '../../src/lib/server/db/schema';
import { closeTestDb, fitGloves, makeBox, makeUser, testDb } from '../support/db';
import { errorOf, signedIn } from '../support/http';

afterAll(closeTestDb);

describe('leak tests', () => {
	it('saves a test with its inputs, rate, class and pass/fail against the box’s class', async () => {
		const boxId = await makeBox({ requiredLeakClass: 1 });
		const manager = await signedIn(await makeUser('manager'));
		// REFERENCES.md: 200 ppm in 60 min → 1.0×10⁻³ h⁻¹, class 2: fails a class-1 box.
		const oxygen = await manager.post(`/api/boxes/${boxId}/leak-tests`, {
			method: 'oxygen',
			o2RisePpm: 200,
			minutes: 60
		});
		expect(oxygen.status).toBe(201);
		expect((await oxygen.json()).leakTest).toMatchObject({
			method: 'oxygen',
			isoClass: 2,
			requiredClass: 1,
			passed: false
		});
		// −10 → −9.5 mbar gauge in 1 h, steady barometer and temperature: 4.98×10⁻⁴, class 1.
		const gauge = await manager.post(`/api/boxes/${boxId}/leak-tests`, {
			method: 'gauge',
			gauge1Pa: -1000,
			gauge2Pa: -950,
			barometric1Pa: 101_325,
			barometric2Pa: 101_325,
			t1K: 293.15,
			t2K: 293.15,
			hours: 1
		});
		const saved = (await gauge.json()).leakTest;
		expect(saved.hourlyLeakRate).toBeCloseTo(4.98e-4, 5);
		expect(saved).toMatchObject({ method: 'pressure', isoClass: 1, passed: true });
		expect(saved.inputs).toMatchObject({ p1Pa: 100_325, p2Pa: 100_375, gauge1Pa: -1000 });

		const list = await (await manager.get(`/api/boxes/${boxId}/leak-tests`)).json();
		expect(list.leakTests).toHaveLength(2);
	});

	it('refuses impossible readings and members, and the form shows field messages', async () => {
		const boxId = await makeBox();
		const manager = await signedIn(await makeUser('manager'));
		const bad = await manager.post(`/api/boxes/${boxId}/leak-tests`, {
			method: 'pressure',
			p1Pa: -5,
			p2Pa: 100_000,
			t1K: 293,
			t2K: 293,
			hours: 1
		});
		expect(bad.status).toBe(400);
		expect(Object.keys((await errorOf(bad)).details?.fields as object)).toContain('p1Pa');
		const form = await manager.form(`/boxes/${boxId}/leak-tests`, {
			method: 'gauge',
			gauge1Mbar: '-10',
			gauge2Mbar: '-9.5',
			baro1Mbar: '1013',
			baro2Mbar: '1013',
			t1C: '-300',
			t2C: '20',
			minutes: '60'
		});
		expect(form.status).toBe(400);
		expect(await form.text()).toContain('t1K must be above 0 K');
		const member = await signedIn(await makeUser('member'));
		const refused = await member.post(`/api/boxes/${boxId}/leak-tests`, {
			method: 'oxygen',
			o2RisePpm: 10,
			minutes: 60
		});
		expect(refused.status).toBe(403);
		const rows = await testDb().select().from(leakTests).where(eq(leakTests.boxId, boxId));
		expect(rows).toHaveLength(0);
	});

	it('a box can hold a glove change open until a passing leak test is recorded', async () => {
		const boxId = await makeBox({ gloveChangeNeedsProof: true, requiredLeakClass: 2 });
		const [left] = await fitGloves(boxId);
		const manager = await signedIn(await makeUser('manager'));
		const started = await manager.post(`/api/boxes/${boxId}/glove-changes`, { portId: left.id });
		const { id } = await started.json();
		const step = (body: Record<string, unknown>) =>
			manager.post(`/api/glove-changes/${id}/steps`, body);
		const complete = () => manager.post(`/api/glove-changes/${id}/complete`, {});
		const reasons = async (r: Response) =>
			((await errorOf(r)).details?.reasons as { code: string }[]).map((x) => x.code);
		for (const key of ['port_sealed', 'orings_off', 'old_glove_removed']) await step({ step: key });
		await step({
			step: 'new_glove_fitted',
			glove: { material: 'butyl', thicknessMm: 0.4, size: '8', hand: 'left' }
		});
		// A reading in spec before the new glove is flushed proves nothing about it.
		await manager.post(`/api/boxes/${boxId}/readings`, {
			at: new Date(Date.now() - 5_000).toISOString(),
			o2Ppm: 0.3,
			h2oPpm: 0.3
		});
		for (let i = 0; i < 3; i++) await step({ step: 'flush_cycle' });
		for (const key of ['orings_on', 'purge_started', 'cover_removed']) await step({ step: key });
		const held = await complete();
		expect(held.status).toBe(422);
		expect(await reasons(held)).toEqual(['release_check_missing']);

		// A reading above warn does not count; a failing test does not either.
		await manager.post(`/api/boxes/${boxId}/readings`, { o2Ppm: 4, h2oPpm: 0.5 });
		await manager.post(`/api/boxes/${boxId}/leak-tests`, {
			method: 'oxygen',
			o2RisePpm: 5000,
			minutes: 60
		});
		const still = await complete();
		expect(still.status).toBe(422);
		expect(await reasons(still)).toEqual(['release_check_missing']);

		await manager.post(`/api/boxes/${boxId}/leak-tests`, {
			method: 'oxygen',
			o2RisePpm: 100,
			minutes: 60
		});
		expect((await complete()).status).toBe(200);
		const [done] = await testDb().select().from(gloveChanges).where(eq(gloveChanges.id, id));
		expect(done.completedAt).not.toBeNull();
	});
});
