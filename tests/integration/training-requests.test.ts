// From newcomer to first booking over the API: a request for training, its trainers told,
// a certification that closes it and tells the person, the booking it opens; refusals;
// reminders before expiry on a fixed clock; the notifications API.
import { afterAll, describe, expect, it } from 'vitest';
import { and, eq, like } from 'drizzle-orm';
import {
	certifications,
	moduleTrainers,
	notifications,
	outbox,
	trainingRequests
} from '../../src/lib/server/db/schema';
import { certify, closeTestDb, makeBox, makeModule, makeUser, testDb } from '../support/db';
import { Client, errorOf, signedIn } from '../support/http';
import { slot } from '../support/time';
import { renderRow } from '../../src/lib/server/mail/render';

afterAll(closeTestDb);

const withOffset = /^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d(\.\d+)?([+-]\d\d:\d\d|Z)$/;

async function taughtModule(label: string) {
	const moduleId = await makeModule(label);
	const trainer = await makeUser('trainer');
	await testDb().insert(moduleTrainers).values({ moduleId, userId: trainer.id });
	return { moduleId, trainer };
}

const noticesOf = (userId: number, kind: string) =>
	testDb()
		.select()
		.from(notifications)
		.where(and(eq(notifications.userId, userId), eq(notifications.kind, kind)));

const requestRow = async (id: number) =>
	(await testDb().select().from(trainingRequests).where(eq(trainingRequests.id, id)))[0];

describe('from newcomer to first booking', () => {
	it('a newcomer asks, the trainer sees it and certifies, the request closes and the box opens', async () => {
		const { moduleId, trainer: trainerUser } = await taughtModule('journey');
		const boxId = await makeBox({ modules: [moduleId] });
		const newcomerUser = await makeUser('member', { label: 'newcomer' });
		const newcomer = await signedIn(newcomerUser);
		const trainer = await signedIn(trainerUser);
		const when = slot(2, 10);

		const refused = await newcomer.post('/api/bookings', { boxId, ...when, purpose: 'First run' });
		expect(refused.status).toBe(422);

		const asked = await newcomer.post('/api/training/requests', {
			moduleId,
			note: 'Free on Tuesdays'
		});
		expect(asked.status).toBe(201);
		const { request } = await asked.json();
		expect(request).toMatchObject({
			userId: newcomerUser.id,
			moduleId,
			note: 'Free on Tuesdays',
			status: 'open'
		});
		expect(request.at).toMatch(withOffset);

		// The trainer is told, in the app and by e-mail, with a link to the requests.
		const [toTrainer] = await noticesOf(trainerUser.id, 'training_requested');
		expect(toTrainer.link).toBe('/manage/training#requests');
		expect(toTrainer.body).toContain('Free on Tuesdays');
		const mail = await testDb()
			.select()
			.from(outbox)
			.where(eq(outbox.dedupeKey, `training-request:${request.id}:to:${trainerUser.id}`));
		expect(mail).toHaveLength(1);
		expect(renderRow(mail[0]).text).toContain('/manage/training#requests');

		const listed = await trainer.get('/api/training/requests');
		expect(listed.status).toBe(200);
		const { requests } = await listed.json();
		const mine = requests.find((r: { id: number }) => r.id === request.id);
		expect(mine).toMatchObject({
			userId: newcomerUser.id,
			userName: 'Test member',
			moduleId,
			note: 'Free on Tuesdays'
		});
		expect(mine.moduleName).toMatch(/^Test journey/);
		expect(mine.at).toMatch(withOffset);

		const granted = await trainer.post('/api/certifications', {
			userId: newcomerUser.id,
			moduleId
		});
		expect(granted.status).toBe(201);
		const { certification } = await granted.json();
		expect(certification).toMatchObject({
			userId: newcomerUser.id,
			moduleId,
			closedRequestId: request.id
		});
		expect(certification.expiresAt).toMatch(withOffset);

		expect(await requestRow(request.id)).toMatchObject({
			status: 'granted',
			decidedBy: trainerUser.id
		});
		const after = (await (await trainer.get('/api/training/requests')).json()).requests;
		expect(after.map((r: { id: number }) => r.id)).not.toContain(request.id);

		// The person is told what they can book now.
		const [told] = await noticesOf(newcomerUser.id, 'certification_granted');
		expect(told.body).toMatch(/You can now book .*Test box/);
		const me = await (await newcomer.get('/api/me/notifications')).json();
		expect(me.items.some((n: { kind: string }) => n.kind === 'certification_granted')).toBe(true);

		const booked = await newcomer.post('/api/bookings', { boxId, ...when, purpose: 'First run' });
		expect(booked.status).toBe(201);

		const teaches = (await (await trainer.get('/api/me')).json()).teaches;
		expect(teaches.map((m: { id: number }) => m.id)).toContain(moduleId);
	});

	it('a second open request, and one for a module already held, are 409', async () => {
		const { moduleId } = await taughtModule('twice');
		const held = await makeModule('held');
		const memberUser = await makeUser('member');
		await certify(memberUser.id, held);
		const member = await signedIn(memberUser);

		expect((await member.post('/api/training/requests', { moduleId })).status).toBe(201);
		const again = await member.post('/api/training/requests', { moduleId });
		expect(again.status).toBe(409);
		expect(await errorOf(again)).toMatchObject({
			code: 'conflict',
			details: { code: 'request_open' }
		});

		const holding = await member.post('/api/training/requests', { moduleId: held });
		expect(holding.status).toBe(409);
		expect(await errorOf(holding)).toMatchObject({
			code: 'conflict',
			details: { code: 'certification_held' }
		});
		const open = await testDb()
			.select()
			.from(trainingRequests)
			.where(eq(trainingRequests.userId, memberUser.id));
		expect(open).toHaveLength(1);
	});

	it('refuses unknown fields and modules that do not exist', async () => {
		const member = await signedIn(await makeUser('member'));
		const bad = await member.post('/api/training/requests', { moduleId: 1, urgent: true });
		expect(bad.status).toBe(400);
		expect(Object.keys((await errorOf(bad)).details?.fields as object)).toEqual(['urgent']);
		expect((await member.post('/api/training/requests', { moduleId: 2_000_000_000 })).status).toBe(
			404
		);
	});

	it('a trainer certifies neither a module they do not teach nor themself; nor does a manager', async () => {
		const { moduleId: taught, trainer: trainerUser } = await taughtModule('taught');
		const other = await makeModule('other');
		const member = await makeUser('member');
		const trainer = await signedIn(trainerUser);

		const notTaught = await trainer.post('/api/certifications', {
			userId: member.id,
			moduleId: other
		});
		expect(notTaught.status).toBe(403);
		expect((await errorOf(notTaught)).code).toBe('forbidden');

		const self = await trainer.post('/api/certifications', {
			userId: trainerUser.id,
			moduleId: taught
		});
		expect(self.status).toBe(403);

		const managerUser = await makeUser('manager');
		const manager = await signedIn(managerUser);
		expect(
			(await manager.post('/api/certifications', { userId: managerUser.id, moduleId: other }))
				.status
		).toBe(403);
		// The form path refuses it too.
		const form = await trainer.form('/manage/training?/grant', {
			userId: trainerUser.id,
			moduleId: taught
		});
		expect(form.status).toBe(403);
		expect(
			await testDb().select().from(certifications).where(eq(certifications.moduleId, taught))
		).toHaveLength(0);

		const memberClient = await signedIn(member);
		expect(
			(await memberClient.post('/api/certifications', { userId: trainerUser.id, moduleId: taught }))
				.status
		).toBe(403);
	});

	it('members may not list requests; a trainer sees those for modules taught, a manager all', async () => {
		const { moduleId } = await taughtModule('listed');
		const asker = await signedIn(await makeUser('member'));
		const { request } = await (await asker.post('/api/training/requests', { moduleId })).json();

		const member = await signedIn(await makeUser('member'));
		const refused = await member.get('/api/training/requests');
		expect(refused.status).toBe(403);
		expect((await errorOf(refused)).code).toBe('forbidden');

		const { trainer: elsewhere } = await taughtModule('elsewhere');
		const ids = async (user: { email: string; password: string }) =>
			(
				(await (await (await signedIn(user)).get('/api/training/requests')).json()).requests as {
					id: number;
				}[]
			).map((r) => r.id);
		expect(await ids(elsewhere)).not.toContain(request.id);
		expect(await ids(await makeUser('manager'))).toContain(request.id);
	});

	it('declining closes the request and tells the person why', async () => {
		const { moduleId, trainer: trainerUser } = await taughtModule('declined');
		const askerUser = await makeUser('member');
		const asker = await signedIn(askerUser);
		const { request } = await (await asker.post('/api/training/requests', { moduleId })).json();
		const trainer = await signedIn(trainerUser);

		const blank = await trainer.form('/manage/training?/decline', {
			requestId: request.id,
			reason: ''
		});
		expect(blank.status).toBe(400);

		const outsider = await signedIn((await taughtModule('outsider')).trainer);
		expect(
			(
				await outsider.form('/manage/training?/decline', {
					requestId: request.id,
					reason: 'Not mine to decide'
				})
			).status
		).toBe(403);

		const declined = await trainer.form('/manage/training?/decline', {
			requestId: request.id,
			reason: 'Do the safety induction first'
		});
		expect(declined.status).toBe(200);
		expect(await requestRow(request.id)).toMatchObject({
			status: 'declined',
			decisionNote: 'Do the safety induction first'
		});
		const [told] = await noticesOf(askerUser.id, 'training_declined');
		expect(told.body).toContain('Do the safety induction first');

		// Closed, so the person may ask again.
		expect((await asker.post('/api/training/requests', { moduleId })).status).toBe(201);
	});

	it('a request for a module nobody teaches goes to the managers', async () => {
		const moduleId = await makeModule('untaught');
		const managerUser = await makeUser('manager');
		const asker = await signedIn(await makeUser('member'));
		const { request } = await (await asker.post('/api/training/requests', { moduleId })).json();
		const [told] = await noticesOf(managerUser.id, 'training_requested');
		expect(told.body).toContain('Nobody teaches this module yet');
		const keys = await testDb()
			.select()
			.from(outbox)
			.where(eq(outbox.dedupeKey, `training-request:${request.id}:to:${managerUser.id}`));
		expect(keys).toHaveLength(1);
		// And the module is flagged to managers.
		const page = await (await signedIn(managerUser)).get('/manage/training');
		expect(await page.text()).toContain('No trainer');
	});
});

describe('reminders before a certification expires', () => {
	// A fixed clock in the past: the app's own scheduler, on today's clock, sees these
	// certifications as long expired and leaves them alone.
	const fixed = new Date('2024-03-01T08:00:00Z');
	const day = 86_400_000;
	const at = (days: number) => new Date(fixed.getTime() + days * day);

	async function grant(userId: number, moduleId: number, grantedDays: number, expiresDays: number) {
		const [row] = await testDb()
			.insert(certifications)
			.values({ userId, moduleId, grantedAt: at(grantedDays), expiresAt: at(expiresDays) })
			.$returningId();
		return row.id;
	}
	const keysOf = async (certId: number) =>
		(
			await testDb()
				.select({ key: outbox.dedupeKey })
				.from(outbox)
				.where(like(outbox.dedupeKey, `cert-expiry:${certId}:%`))
		)
			.map((r) => r.key)
			.sort();

	it('30 and 7 days ahead, once each', async () => {
		const { remindExpiringCertifications } =
			await import('../../src/lib/server/services/certification-reminders');
		const member = await makeUser('member');
		const moduleId = await makeModule('expiring');
		const certId = await grant(member.id, moduleId, -345, 20);

		await remindExpiringCertifications(fixed);
		expect(await keysOf(certId)).toEqual([`cert-expiry:${certId}:30`]);
		await remindExpiringCertifications(at(1));
		expect(await keysOf(certId)).toEqual([`cert-expiry:${certId}:30`]);

		await remindExpiringCertifications(at(14));
		const both = [`cert-expiry:${certId}:30`, `cert-expiry:${certId}:7`].sort();
		expect(await keysOf(certId)).toEqual(both);
		await remindExpiringCertifications(at(15));
		await remindExpiringCertifications(at(25));
		expect(await keysOf(certId)).toEqual(both);

		const told = await noticesOf(member.id, 'certification_expiring');
		expect(told).toHaveLength(2);
		expect(told.every((n) => n.link === '/training')).toBe(true);
	});

	it('none for a certification renewed by a newer grant, or revoked', async () => {
		const { remindExpiringCertifications } =
			await import('../../src/lib/server/services/certification-reminders');
		const member = await makeUser('member');
		const moduleId = await makeModule('renewed');
		const old = await grant(member.id, moduleId, -355, 10);
		const renewed = await grant(member.id, moduleId, -1, 364);
		const revokedModule = await makeModule('revoked');
		const revoked = await grant(member.id, revokedModule, -355, 10);
		await testDb()
			.update(certifications)
			.set({ revokedAt: at(-2), revokeReason: 'test' })
			.where(eq(certifications.id, revoked));

		await remindExpiringCertifications(fixed);
		expect(await keysOf(old)).toEqual([]);
		expect(await keysOf(renewed)).toEqual([]);
		expect(await keysOf(revoked)).toEqual([]);
	});
});

describe('notifications API', () => {
	it('lists one’s notices and marks only one’s own read', async () => {
		const meUser = await makeUser('member');
		const other = await makeUser('member');
		const rows = await testDb()
			.insert(notifications)
			.values([
				{ userId: meUser.id, kind: 'test', title: 'First', body: 'one', link: '/training' },
				{ userId: meUser.id, kind: 'test', title: 'Second', body: 'two' },
				{ userId: other.id, kind: 'test', title: 'Theirs', body: 'three' }
			])
			.$returningId();
		const [first, second, theirs] = rows.map((r) => r.id);
		const me = await signedIn(meUser);

		const listed = await me.get('/api/me/notifications');
		expect(listed.status).toBe(200);
		const feed = await listed.json();
		expect(feed.unread).toBe(2);
		expect(feed.items.map((n: { id: number }) => n.id).sort()).toEqual([first, second].sort());
		const item = feed.items.find((n: { id: number }) => n.id === first);
		expect(item).toMatchObject({ kind: 'test', link: '/training', read: false });
		expect(item.text).toContain('First');
		expect(item.text).toContain('one');
		expect(item.at).toMatch(withOffset);

		const read = await me.post('/api/me/notifications/read', { ids: [first, theirs] });
		expect(read.status).toBe(200);
		expect(await read.json()).toEqual({ unread: 1 });
		const [stillTheirs] = await testDb()
			.select()
			.from(notifications)
			.where(eq(notifications.id, theirs));
		expect(stillTheirs.readAt).toBeNull();
		const after = await (await me.get('/api/me/notifications')).json();
		expect(after.items.find((n: { id: number }) => n.id === first).read).toBe(true);

		const strict = await me.post('/api/me/notifications/read', { ids: [second], all: true });
		expect(strict.status).toBe(400);
		expect(Object.keys((await errorOf(strict)).details?.fields as object)).toEqual(['all']);
		expect((await me.post('/api/me/notifications/read', { ids: [] })).status).toBe(400);
		expect((await new Client().get('/api/me/notifications')).status).toBe(401);
	});
});
