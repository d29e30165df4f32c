import { afterAll, describe, expect, it } from 'vitest';
import { and, eq } from 'drizzle-orm';
import { groupMemberships, researchGroups } from '../../src/lib/server/db/schema';
import { closeTestDb, makeGroup, makeUser, testDb } from '../support/db';
import { signedIn } from '../support/http';

afterAll(closeTestDb);

const statusOf = async (groupId: number, userId: number) =>
	(
		await testDb()
			.select({ s: groupMemberships.status })
			.from(groupMemberships)
			.where(and(eq(groupMemberships.groupId, groupId), eq(groupMemberships.userId, userId)))
	)[0]?.s;

describe('groups', () => {
	it('a signed-in person asks to join; the PI approves, sees them, and can remove them but not themself', async () => {
		const group = await makeGroup('joining');
		const person = await makeUser('member');
		const asker = await signedIn(person);
		expect((await asker.form('/account?/join', { groupId: group.id })).status).toBe(200);
		expect(await statusOf(group.id, person.id)).toBe('pending');
		expect((await asker.form('/account?/join', { groupId: group.id })).status).toBe(409);

		const pi = await signedIn(group.pi);
		const page = await (await pi.get(`/groups/${group.id}`)).text();
		expect(page).toContain('Asking to join');
		expect((await pi.form(`/groups/${group.id}?/approve`, { userId: person.id })).status).toBe(200);
		expect(await statusOf(group.id, person.id)).toBe('active');

		const self = await pi.form(`/groups/${group.id}?/remove`, { userId: group.pi.id });
		expect(self.status).toBe(409);
		expect(
			(await pi.form(`/groups/${group.id}?/remove`, { userId: person.id, confirmed: 'yes' })).status
		).toBe(200);
		expect(await statusOf(group.id, person.id)).toBe('removed');
	});

	it('another group’s PI and a member get 403; a manager sees and edits any group', async () => {
		const group = await makeGroup('guarded');
		const other = await makeGroup('elsewhere');
		const member = await makeUser('member', { group: group.id });
		const otherPi = await signedIn(other.pi);
		expect((await otherPi.get(`/groups/${group.id}`)).status).toBe(403);
		expect((await otherPi.form(`/groups/${group.id}?/remove`, { userId: member.id })).status).toBe(
			403
		);
		expect(await statusOf(group.id, member.id)).toBe('active');
		expect((await (await signedIn(member)).get(`/groups/${group.id}`)).status).toBe(403);

		const manager = await signedIn(await makeUser('manager'));
		expect((await manager.get(`/groups/${group.id}`)).status).toBe(200);
		const edited = await manager.form(`/groups/${group.id}?/edit`, {
			name: `${group.name} renamed`,
			costCentre: 'CC-9',
			piUserId: group.pi.id,
			external: 'on'
		});
		expect(edited.status).toBe(200);
		const [saved] = await testDb()
			.select()
			.from(researchGroups)
			.where(eq(researchGroups.id, group.id));
		expect(saved).toMatchObject({
			name: `${group.name} renamed`,
			costCentre: 'CC-9',
			external: true
		});
		const blank = await manager.form(`/groups/${group.id}?/edit`, {
			name: '',
			costCentre: '',
			piUserId: ''
		});
		expect(blank.status).toBe(400);
		expect(await blank.text()).toContain('Give the cost-centre code');
	});
});
