import { afterAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { auditLog, users } from '../../src/lib/server/db/schema';
import {
	closeTestDb,
	makeGroup,
	makeUser,
	testDb,
	uniqueEmail,
	userIdByEmail
} from '../support/db';
import { Client, errorOf } from '../support/http';

afterAll(closeTestDb);

describe('registration → approval → sign-in', () => {
	it('a registration waits for the PI, then signs in and reads /api/me', async () => {
		const group = await makeGroup('reg');
		const email = uniqueEmail('reg');
		const password = 'a-long-enough-password';

		const visitor = new Client();
		const registered = await visitor.form('/register', {
			name: 'Ada Registrant',
			email,
			password,
			groupId: group.id
		});
		expect(registered.status).toBe(303);
		expect(registered.headers.get('location')).toBe('/signin?registered=1');

		const early = await visitor.post('/api/session', { email, password });
		expect(early.status).toBe(403);
		expect((await errorOf(early)).message).toMatch(/waiting for approval/);

		const pi = new Client();
		await pi.signIn(group.pi.email, group.pi.password);
		const queue = await pi.get('/manage/approvals');
		expect(queue.status).toBe(200);
		expect(await queue.text()).toContain(email);

		const userId = await userIdByEmail(email);
		const approved = await pi.form('/manage/approvals?/approve', { userId });
		expect(approved.status).toBe(200);

		await visitor.signIn(email, password);
		const me = await visitor.get('/api/me');
		expect(me.status).toBe(200);
		const body = await me.json();
		expect(body).toMatchObject({
			email,
			name: 'Ada Registrant',
			role: 'member',
			group: { id: group.id, name: group.name, isPi: false },
			certifications: []
		});
		expect(JSON.stringify(body)).not.toMatch(/password|hash/i);

		const entries = await testDb()
			.select({ action: auditLog.action })
			.from(auditLog)
			.where(eq(auditLog.entityId, String(userId)));
		expect(entries.map((e) => e.action)).toEqual(
			expect.arrayContaining(['user.registered', 'user.approved'])
		);
	});

	it('a PI cannot approve someone asking to join another group', async () => {
		const theirs = await makeGroup('theirs');
		const other = await makeGroup('other');
		const email = uniqueEmail('cross');
		await new Client().form('/register', {
			name: 'Cross Applicant',
			email,
			password: 'another-long-password',
			groupId: theirs.id
		});
		const id = await userIdByEmail(email);

		const pi = new Client();
		await pi.signIn(other.pi.email, other.pi.password);
		expect(await (await pi.get('/manage/approvals')).text()).not.toContain(email);
		const refused = await pi.form('/manage/approvals?/approve', { userId: id });
		expect(refused.status).toBe(403);
		const [row] = await testDb()
			.select({ status: users.status })
			.from(users)
			.where(eq(users.id, id));
		expect(row.status).toBe('pending');
	});

	it('refuses a duplicate e-mail, a short password and an unknown group, with field messages', async () => {
		const group = await makeGroup('dup');
		const existing = await makeUser('member');
		const visitor = new Client();

		const duplicate = await visitor.form('/register', {
			name: 'Dupe',
			email: existing.email,
			password: 'long-enough-password',
			groupId: group.id
		});
		expect(duplicate.status).toBe(409);
		expect(await duplicate.text()).toContain('already exists');

		const short = await visitor.form('/register', {
			name: 'Shorty',
			email: uniqueEmail('short'),
			password: 'short',
			groupId: group.id
		});
		expect(short.status).toBe(400);
		expect(await short.text()).toContain('at least 12 characters');

		const nogroup = await visitor.form('/register', {
			name: 'Nogroup',
			email: uniqueEmail('nogroup'),
			password: 'long-enough-password',
			groupId: 999999
		});
		expect(nogroup.status).toBe(400);
		expect(await nogroup.text()).toContain('Choose one of the listed groups');
	});
});

describe('sign-in', () => {
	it('gives the same answer for an unknown e-mail and a wrong password', async () => {
		const user = await makeUser('member');
		const wrong = await new Client().post('/api/session', {
			email: user.email,
			password: 'not-the-password'
		});
		const unknown = await new Client().post('/api/session', {
			email: uniqueEmail('nobody'),
			password: 'not-the-password'
		});
		expect(wrong.status).toBe(401);
		expect(unknown.status).toBe(401);
		const [a, b] = [await errorOf(wrong), await errorOf(unknown)];
		expect(a).toEqual(b);
		expect(a.code).toBe('invalid_credentials');
	});

	it('answers malformed JSON and missing fields with invalid_input', async () => {
		const client = new Client();
		const malformed = await client.post('/api/session', '{"email":');
		expect(malformed.status).toBe(400);
		expect((await errorOf(malformed)).code).toBe('invalid_input');

		const missing = await client.post('/api/session', { email: 'someone@example.org' });
		expect(missing.status).toBe(400);
		const err = await errorOf(missing);
		expect(err.code).toBe('invalid_input');
		expect(err.details?.fields).toHaveProperty('password');
	});

	it('throttles repeated failures for an account with 429 and a clear message', async () => {
		const user = await makeUser('member', { label: 'throttle' });
		const client = new Client();
		for (let i = 0; i < 5; i++) {
			const r = await client.post('/api/session', {
				email: user.email,
				password: 'wrong-password'
			});
			expect(r.status).toBe(401);
		}
		const blocked = await client.post('/api/session', {
			email: user.email,
			password: user.password
		});
		expect(blocked.status).toBe(429);
		expect(Number(blocked.headers.get('retry-after'))).toBeGreaterThan(0);
		const err = await errorOf(blocked);
		expect(err.code).toBe('rate_limited');
		expect(err.message).toMatch(/Too many failed sign-ins/);
		expect(client.signedIn).toBe(false);

		// Another account from the same address is not locked out by it.
		const other = await makeUser('member');
		await new Client().signIn(other.email, other.password);
	});

	it('signs out with DELETE /api/session', async () => {
		const user = await makeUser('member');
		const client = new Client();
		await client.signIn(user.email, user.password);
		expect((await client.get('/api/me')).status).toBe(200);
		expect((await client.delete('/api/session')).status).toBe(204);
		expect((await client.get('/api/me')).status).toBe(401);
	});
});

describe('password change', () => {
	it('ends every other session of the user and keeps this one', async () => {
		const user = await makeUser('member', { label: 'pw' });
		const here = new Client();
		const elsewhere = new Client();
		await here.signIn(user.email, user.password);
		await elsewhere.signIn(user.email, user.password);

		const next = 'a-brand-new-password';
		const wrongCurrent = await here.form('/account?/password', {
			currentPassword: 'not-it-at-all',
			newPassword: next,
			confirmPassword: next
		});
		expect(wrongCurrent.status).toBe(400);
		expect((await elsewhere.get('/api/me')).status).toBe(200);

		const changed = await here.form('/account?/password', {
			currentPassword: user.password,
			newPassword: next,
			confirmPassword: next
		});
		expect(changed.status).toBe(200);
		expect((await here.get('/api/me')).status).toBe(200);
		expect((await elsewhere.get('/api/me')).status).toBe(401);

		expect(
			(await new Client().post('/api/session', { email: user.email, password: user.password }))
				.status
		).toBe(401);
		await new Client().signIn(user.email, next);
	});
});
