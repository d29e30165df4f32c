import { afterAll, describe, expect, it } from 'vitest';
import { and, eq } from 'drizzle-orm';
import { DateTime } from 'luxon';
import {
	certifications,
	modulePrerequisites,
	moduleTrainers
} from '../../src/lib/server/db/schema';
import { certify, closeTestDb, makeBox, makeModule, makeUser, testDb } from '../support/db';
import { errorOf, signedIn } from '../support/http';
import { facilityTz, slot } from '../support/time';

afterAll(closeTestDb);

describe('certifications', () => {
	it('a trainer certifies a module they teach; the expiry follows from its validity', async () => {
		const moduleId = await makeModule('taught', 12);
		const trainer = await makeUser('trainer');
		await testDb().insert(moduleTrainers).values({ moduleId, userId: trainer.id });
		const trainee = await makeUser('member');
		const today = DateTime.now().setZone(facilityTz).toISODate()!;

		const client = await signedIn(trainer);
		const r = await client.form('/manage/training?/grant', {
			userId: trainee.id,
			moduleId,
			grantedOn: today
		});
		expect(r.status).toBe(200);
		const [cert] = await testDb()
			.select()
			.from(certifications)
			.where(and(eq(certifications.userId, trainee.id), eq(certifications.moduleId, moduleId)));
		const expected = DateTime.fromISO(today, { zone: facilityTz }).plus({ months: 12 }).toJSDate();
		expect(cert.expiresAt.getTime()).toBe(expected.getTime());
		expect(cert.grantedBy).toBe(trainer.id);

		const me = await (await signedIn(trainee)).get('/api/me');
		expect((await me.json()).certifications.map((c: { moduleId: number }) => c.moduleId)).toContain(
			moduleId
		);
	});

	it('refuses a module the trainer does not teach (403) and a future training date', async () => {
		const moduleId = await makeModule('not-taught');
		const trainer = await signedIn(await makeUser('trainer'));
		const trainee = await makeUser('member');
		const today = DateTime.now().setZone(facilityTz);
		expect(
			(
				await trainer.form('/manage/training?/grant', {
					userId: trainee.id,
					moduleId,
					grantedOn: today.toISODate()!
				})
			).status
		).toBe(403);

		const manager = await signedIn(await makeUser('manager'));
		const future = await manager.form('/manage/training?/grant', {
			userId: trainee.id,
			moduleId,
			grantedOn: today.plus({ days: 3 }).toISODate()!
		});
		expect(future.status).toBe(400);
		expect(await future.text()).toContain('cannot be in the future');
	});

	it('refuses a module whose prerequisites the person lacks', async () => {
		const basic = await makeModule('basic');
		const advanced = await makeModule('advanced');
		await testDb()
			.insert(modulePrerequisites)
			.values({ moduleId: advanced, requiresModuleId: basic });
		const manager = await signedIn(await makeUser('manager'));
		const trainee = await makeUser('member');
		const today = DateTime.now().setZone(facilityTz).toISODate()!;
		const refused = await manager.form('/manage/training?/grant', {
			userId: trainee.id,
			moduleId: advanced,
			grantedOn: today
		});
		expect(refused.status).toBe(422);
		expect(await refused.text()).toContain('first needs');

		await certify(trainee.id, basic);
		expect(
			(
				await manager.form('/manage/training?/grant', {
					userId: trainee.id,
					moduleId: advanced,
					grantedOn: today
				})
			).status
		).toBe(200);
	});

	it('a revoked certification no longer opens the box', async () => {
		const moduleId = await makeModule('revocable');
		const boxId = await makeBox({ modules: [moduleId] });
		const member = await makeUser('member');
		await certify(member.id, moduleId);
		const [cert] = await testDb()
			.select()
			.from(certifications)
			.where(eq(certifications.userId, member.id));

		const manager = await signedIn(await makeUser('manager'));
		const noReason = await manager.form('/manage/training?/revoke', {
			certificationId: cert.id,
			reason: ''
		});
		expect(noReason.status).toBe(400);
		expect(
			(
				await manager.form('/manage/training?/revoke', {
					certificationId: cert.id,
					reason: 'Unsafe antechamber use'
				})
			).status
		).toBe(200);

		const r = await (
			await signedIn(member)
		).post('/api/bookings', { boxId, ...slot(2, 10), purpose: 'x' });
		expect(r.status).toBe(422);
		expect(((await errorOf(r)).details?.reasons as { code: string }[]).map((x) => x.code)).toEqual([
			'certification_missing'
		]);
	});

	it('members may not open the certification matrix', async () => {
		const member = await signedIn(await makeUser('member'));
		expect((await member.get('/manage/training')).status).toBe(403);
		expect(
			(
				await member.form('/manage/training?/grant', {
					userId: 1,
					moduleId: 1,
					grantedOn: '2026-01-01'
				})
			).status
		).toBe(403);
	});
});

describe('editing modules', () => {
	it('a manager appoints a new trainer to a module, who can then certify it', async () => {
		const moduleId = await makeModule('appointed', 12);
		const manager = await signedIn(await makeUser('manager'));
		const newTrainer = await makeUser('trainer');
		const trainee = await makeUser('member');
		const today = DateTime.now().setZone(facilityTz).toISODate()!;
		const trainer = await signedIn(newTrainer);
		const grant = { userId: trainee.id, moduleId, grantedOn: today };
		expect((await trainer.form('/manage/training?/grant', grant)).status).toBe(403);

		// Flagged as untaught until then, on the page and on the manager's dashboard.
		expect(await (await manager.get('/')).text()).toContain('no trainer');

		const params = new URLSearchParams({
			moduleId: String(moduleId),
			name: `Renamed ${moduleId}`,
			description: 'Transfers through the large antechamber',
			validityMonths: '24'
		});
		params.append('trainerIds', String(newTrainer.id));
		const saved = await manager.request('POST', `/manage/training?edit=${moduleId}&/edit`, params);
		expect(saved.status).toBe(200);
		const [row] = await testDb()
			.select()
			.from(moduleTrainers)
			.where(eq(moduleTrainers.moduleId, moduleId));
		expect(row.userId).toBe(newTrainer.id);

		expect((await trainer.form('/manage/training?/grant', grant)).status).toBe(200);
		const [cert] = await testDb()
			.select()
			.from(certifications)
			.where(and(eq(certifications.userId, trainee.id), eq(certifications.moduleId, moduleId)));
		// The new validity applies to this grant.
		const expected = DateTime.fromISO(today, { zone: facilityTz }).plus({ months: 24 }).toJSDate();
		expect(cert.expiresAt.getTime()).toBe(expected.getTime());
	});

	it('refuses a member as trainer, a circle of prerequisites, and trainers who edit', async () => {
		const basic = await makeModule('circle-basic');
		const advanced = await makeModule('circle-advanced');
		await testDb()
			.insert(modulePrerequisites)
			.values({ moduleId: advanced, requiresModuleId: basic });
		const manager = await signedIn(await makeUser('manager'));
		const member = await makeUser('member');
		const edit = (fields: Record<string, string | number>, trainerIds: number[] = []) => {
			const params = new URLSearchParams(
				Object.entries(fields).map(([k, v]) => [k, String(v)] as [string, string])
			);
			for (const id of trainerIds) params.append('trainerIds', String(id));
			return manager.request('POST', `/manage/training?edit=${basic}&/edit`, params);
		};
		const base = { moduleId: basic, name: `Basic ${basic}`, validityMonths: 12 };

		const notTrainer = await edit(base, [member.id]);
		expect(notTrainer.status).toBe(400);
		expect(await notTrainer.text()).toContain('cannot teach');

		const circle = await edit({ ...base, prerequisiteIds: advanced });
		expect(circle.status).toBe(400);
		expect(await circle.text()).toContain('cannot need itself first');
		const prereqs = await testDb()
			.select()
			.from(modulePrerequisites)
			.where(eq(modulePrerequisites.moduleId, basic));
		expect(prereqs).toHaveLength(0);

		const trainer = await signedIn(await makeUser('trainer'));
		expect(
			(await trainer.form(`/manage/training?/edit`, { ...base, name: 'Taken over' })).status
		).toBe(403);
	});
});
