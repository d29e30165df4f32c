// Nobody records their own training: a trainer whose certification a manager revoked cannot
// grant it back to themself, by the API or by the form; a manager cannot either; another
// trainer of the module can.
import { afterAll, describe, expect, it } from 'vitest';
import { and, eq, isNull } from 'drizzle-orm';
import { certifications, moduleTrainers } from '../../src/lib/server/db/schema';
import { certify, closeTestDb, makeModule, makeUser, testDb } from '../support/db';
import { errorOf, signedIn } from '../support/http';

afterAll(closeTestDb);

/** The person's certifications in the module that are not revoked. */
const live = (userId: number, moduleId: number) =>
	testDb()
		.select({ id: certifications.id, grantedBy: certifications.grantedBy })
		.from(certifications)
		.where(
			and(
				eq(certifications.userId, userId),
				eq(certifications.moduleId, moduleId),
				isNull(certifications.revokedAt)
			)
		);

async function teaching(moduleId: number) {
	const trainer = await makeUser('trainer');
	await testDb().insert(moduleTrainers).values({ moduleId, userId: trainer.id });
	return trainer;
}

describe('self-certification', () => {
	it('a trainer cannot undo the revocation of their own certification; another trainer can certify them', async () => {
		const moduleId = await makeModule('self-cert');
		const trainer = await teaching(moduleId);
		await certify(trainer.id, moduleId);
		const [cert] = await live(trainer.id, moduleId);

		const manager = await signedIn(await makeUser('manager'));
		const revoked = await manager.form('/manage/training?/revoke', {
			certificationId: cert.id,
			reason: 'Left the antechamber open'
		});
		expect(revoked.status).toBe(200);
		expect(await live(trainer.id, moduleId)).toEqual([]);

		const self = await signedIn(trainer);
		const api = await self.post('/api/certifications', { userId: trainer.id, moduleId });
		expect(api.status).toBe(403);
		const refusal = await errorOf(api);
		expect(refusal.code).toBe('forbidden');
		expect(refusal.message).toBe('Another trainer or a manager must record your training.');

		const form = await self.form('/manage/training?/grant', { userId: trainer.id, moduleId });
		expect(form.status).toBe(403);
		expect(await form.text()).toContain('Another trainer or a manager must record your training.');
		expect(await live(trainer.id, moduleId)).toEqual([]);

		const colleague = await signedIn(await teaching(moduleId));
		const granted = await colleague.post('/api/certifications', { userId: trainer.id, moduleId });
		expect(granted.status).toBe(201);
		const [now] = await live(trainer.id, moduleId);
		expect(now.grantedBy).not.toBe(trainer.id);
	});

	it('a manager cannot certify themself either', async () => {
		const moduleId = await makeModule('self-cert-manager');
		const managerUser = await makeUser('manager');
		const manager = await signedIn(managerUser);
		const r = await manager.post('/api/certifications', { userId: managerUser.id, moduleId });
		expect(r.status).toBe(403);
		expect((await errorOf(r)).code).toBe('forbidden');
		expect(await live(managerUser.id, moduleId)).toEqual([]);
	});
});
