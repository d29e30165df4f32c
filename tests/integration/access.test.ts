// Each role against each route of the foundation: 401 without a session, 403 without the
// role, 200 with it. Pages redirect to sign-in instead of answering 401.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq } from 'drizzle-orm';
import type { Role } from '../../src/lib/domain/roles';
import { auditLog, users } from '../../src/lib/server/db/schema';
import { closeTestDb, makeGroup, makeUser, testDb } from '../support/db';
import { Client, errorOf } from '../support/http';

afterAll(closeTestDb);

type Who = Role | 'anonymous' | 'pi';
const everyone: Who[] = ['anonymous', 'member', 'trainer', 'manager', 'admin', 'pi'];
const clients = new Map<Who, Client>();

beforeAll(async () => {
	clients.set('anonymous', new Client());
	for (const role of ['member', 'trainer', 'manager', 'admin'] as const) {
		const user = await makeUser(role);
		const client = new Client();
		await client.signIn(user.email, user.password);
		clients.set(role, client);
	}
	const group = await makeGroup('access');
	const pi = new Client();
	await pi.signIn(group.pi.email, group.pi.password);
	clients.set('pi', pi);
});

type Case = {
	name: string;
	call: (c: Client) => Promise<Response>;
	expect: Partial<Record<Who, number>>;
};

const cases: Case[] = [
	{
		name: 'GET /api/me',
		call: (c) => c.get('/api/me'),
		expect: { anonymous: 401, member: 200, trainer: 200, manager: 200, admin: 200, pi: 200 }
	},
	{
		name: 'GET / (dashboard)',
		call: (c) => c.get('/'),
		expect: { anonymous: 303, member: 200, trainer: 200, manager: 200, admin: 200, pi: 200 }
	},
	{
		name: 'GET /account',
		call: (c) => c.get('/account'),
		expect: { anonymous: 303, member: 200, trainer: 200, manager: 200, admin: 200, pi: 200 }
	},
	{
		name: 'GET /manage/approvals',
		call: (c) => c.get('/manage/approvals'),
		expect: { anonymous: 303, member: 403, trainer: 403, manager: 200, admin: 200, pi: 200 }
	},
	{
		name: 'POST /manage/approvals?/approve',
		call: (c) => c.form('/manage/approvals?/approve', { userId: 1 }),
		expect: { anonymous: 303, member: 403, trainer: 403 }
	},
	{
		name: 'GET /admin/users',
		call: (c) => c.get('/admin/users'),
		expect: { anonymous: 303, member: 403, trainer: 403, manager: 403, admin: 200, pi: 403 }
	},
	{
		name: 'POST /admin/users?/role',
		call: (c) => c.form('/admin/users?/role', { userId: 1, role: 'admin' }),
		expect: { anonymous: 303, member: 403, trainer: 403, manager: 403, pi: 403 }
	},
	{
		name: 'GET /signin and /register',
		call: async (c) => {
			const [a, b] = [await c.get('/signin'), await c.get('/register')];
			// Both must answer alike: a differing one is what is reported, and then fails.
			expect(a.status).toBe(b.status);
			return a;
		},
		expect: { anonymous: 200, member: 303 }
	}
];

describe.each(cases)('$name', ({ call, expect: expected }) => {
	it.each(everyone.filter((w) => expected[w] !== undefined))('as %s', async (who) => {
		const response = await call(clients.get(who)!);
		expect(response.status).toBe(expected[who]);
		if (response.status === 303 && who === 'anonymous') {
			expect(response.headers.get('location')).toMatch(/^\/signin/);
		}
	});
});

describe('API errors', () => {
	it('a member calling an admin-only action gets 403 and nothing changes', async () => {
		const member = clients.get('member')!;
		const me = await (await member.get('/api/me')).json();
		const r = await member.form('/admin/users?/role', { userId: me.id, role: 'admin' });
		expect(r.status).toBe(403);
		expect((await (await member.get('/api/me')).json()).role).toBe('member');
	});

	it('an unknown API route answers 404 in the error shape', async () => {
		const r = await clients.get('member')!.get('/api/no-such-thing');
		expect(r.status).toBe(404);
		expect((await errorOf(r)).code).toBe('not_found');
	});

	it('an admin changes a role and it is audited; an admin cannot demote themself', async () => {
		const admin = clients.get('admin')!;
		const target = await makeUser('member');
		expect(
			(await admin.form('/admin/users?/role', { userId: target.id, role: 'trainer' })).status
		).toBe(200);
		const [row] = await testDb()
			.select({ role: users.role })
			.from(users)
			.where(eq(users.id, target.id));
		expect(row.role).toBe('trainer');
		const entries = await testDb()
			.select({ details: auditLog.details })
			.from(auditLog)
			.where(
				and(eq(auditLog.action, 'user.role_changed'), eq(auditLog.entityId, String(target.id)))
			);
		expect(entries).toEqual([{ details: { from: 'member', to: 'trainer' } }]);

		const self = await (await admin.get('/api/me')).json();
		expect(
			(await admin.form('/admin/users?/role', { userId: self.id, role: 'member' })).status
		).toBe(409);
	});
});
