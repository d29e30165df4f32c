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
		const started = await manager.form(`/boxes/${boxId}?/gloveChange`, { portId: left.id });
		const changeUrl = started.headers.get('location')!;
		await manager.form(`${changeUrl}?/fitted`, {
			material: 'butyl',
			thicknessMm: '0.4',
			size: '8',
			hand: 'left'
		});
		for (let i = 0; i < 3; i++) await manager.form(`${changeUrl}?/step`, { key: 'flush_cycle' });
		// A reading in spec while the port is still covered proves nothing about the new glove.
		await manager.post(`/api/boxes/${boxId}/readings`, {
			at: new Date(Date.now() - 5_000).toISOString(),
			o2Ppm: 0.3,
			h2oPpm: 0.3
		});
		const covered = await manager.form(`${changeUrl}?/complete`, {});
		expect(covered.status).toBe(422);
		expect(await covered.text()).toContain('log the cover');
		await manager.form(`${changeUrl}?/step`, { key: 'cover_removed' });
		const held = await manager.form(`${changeUrl}?/complete`, {});
		expect(held.status).toBe(422);
		expect(await held.text()).toContain('passing leak test or a reading under both warn levels');

		// A reading above warn does not count; a failing test does not either.
		await manager.post(`/api/boxes/${boxId}/readings`, { o2Ppm: 4, h2oPpm: 0.5 });
		await manager.post(`/api/boxes/${boxId}/leak-tests`, {
			method: 'oxygen',
			o2RisePpm: 5000,
			minutes: 60
		});
		expect((await manager.form(`${changeUrl}?/complete`, {})).status).toBe(422);

		await manager.post(`/api/boxes/${boxId}/leak-tests`, {
			method: 'oxygen',
			o2RisePpm: 100,
			minutes: 60
		});
		expect((await manager.form(`${changeUrl}?/complete`, {})).status).toBe(200);
		const changeId = Number(changeUrl.split('/').pop());
		const [done] = await testDb().select().from(gloveChanges).where(eq(gloveChanges.id, changeId));
		expect(done.completedAt).not.toBeNull();
	});
});
