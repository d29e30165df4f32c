// Lists that grow without bound, paged in SQL: the admin's people, a group's bookings and a
// person's notices. Each test makes its own rows and finds them by a tag of its own, so the
// totals do not depend on what other tests left in the shared database.
import { afterAll, describe, expect, it } from 'vitest';
import { randomBytes } from 'node:crypto';
import { bookings, notifications, users } from '../../src/lib/server/db/schema';
import { readListQuery, type ListSpec } from '../../src/lib/domain/listing';
import { pool } from '../../src/lib/server/db';
import { usersList, usersPage } from '../../src/lib/server/services/user-list';
import { groupBookingsList, groupBookingsPage } from '../../src/lib/server/services/groups';
import { notificationsList, notificationsPage } from '../../src/lib/server/services/notifications';
import { closeTestDb, makeBox, makeGroup, makeUser, testDb, uniqueEmail } from '../support/db';
import { signedIn } from '../support/http';

afterAll(async () => {
	await closeTestDb();
	// The services' own pool, opened by importing them.
	await pool?.end();
});

const HOUR = 3_600_000;
const DAY = 24 * HOUR;
/** A fixed clock: every date below is relative to it. */
const NOW = new Date('2031-03-12T12:00:00Z');

const tag = () => `lst${randomBytes(4).toString('hex')}`;

/** The list's view from an address's parameters, with a small page to page through. */
function query<S extends string, F extends string>(
	spec: ListSpec<S, F>,
	params: Record<string, string>,
	perPage = 2
) {
	return readListQuery(new URLSearchParams(params), { ...spec, perPage });
}

async function person(
	t: string,
	name: string,
	values: Partial<typeof users.$inferInsert> = {}
): Promise<number> {
	const [row] = await testDb()
		.insert(users)
		.values({
			email: uniqueEmail(`${t}-${name.toLowerCase()}`),
			name: `${name} ${t}`,
			passwordHash: 'not-a-hash',
			role: 'member',
			status: 'active',
			...values
		})
		.$returningId();
	return row.id;
}

describe('the admin’s list of people', () => {
	it('finds people by name or e-mail, counts them all and pages past the end to the last', async () => {
		const t = tag();
		for (const name of ['Ada', 'Bea', 'Cid', 'Dov', 'Eve']) await person(t, name);

		const first = await usersPage(query(usersList, { q: t }));
		expect(first.view.total).toBe(5);
		expect(first.view.pages).toBe(3);
		expect(first.rows.map((u) => u.name)).toEqual([`Ada ${t}`, `Bea ${t}`]);

		// By e-mail too: the address carries the name in lower case.
		expect((await usersPage(query(usersList, { q: `${t}-cid` }))).view.total).toBe(1);

		// Page 9 of 3 shows page 3, with the last person.
		const past = await usersPage(query(usersList, { q: t, page: '9' }));
		expect(past.view.page).toBe(3);
		expect(past.rows.map((u) => u.name)).toEqual([`Eve ${t}`]);
	});

	it('filters by role and status and sorts by any of its columns', async () => {
		const t = tag();
		await person(t, 'Ann', { role: 'trainer' });
		await person(t, 'Bob', { role: 'trainer', status: 'suspended' });
		await person(t, 'Cy', { role: 'manager' });
		await person(t, 'Di', { status: 'suspended' });

		const trainers = await usersPage(query(usersList, { q: t, role: 'trainer' }, 25));
		expect(trainers.rows.map((u) => u.name)).toEqual([`Ann ${t}`, `Bob ${t}`]);
		const off = await usersPage(query(usersList, { q: t, status: 'suspended' }, 25));
		expect(off.rows.map((u) => u.name)).toEqual([`Bob ${t}`, `Di ${t}`]);
		const both = await usersPage(
			query(usersList, { q: t, role: 'trainer', status: 'suspended' }, 25)
		);
		expect(both.view.total).toBe(1);

		// A value the list does not know is ignored, not an error.
		expect((await usersPage(query(usersList, { q: t, role: 'wizard' }, 25))).view.total).toBe(4);

		const byNameDown = await usersPage(query(usersList, { q: t, sort: 'name', dir: 'desc' }, 25));
		expect(byNameDown.rows.map((u) => u.name)).toEqual([
			`Di ${t}`,
			`Cy ${t}`,
			`Bob ${t}`,
			`Ann ${t}`
		]);
		// Roles sort in the order of what they may do.
		const byRole = await usersPage(query(usersList, { q: t, sort: 'role' }, 25));
		expect(byRole.rows.map((u) => u.role)).toEqual(['member', 'trainer', 'trainer', 'manager']);
	});

	it('the page reads its view from the address', async () => {
		const t = tag();
		await person(t, 'Amy');
		await person(t, 'Zoe');
		const admin = await signedIn(await makeUser('admin'));
		const html = await (await admin.get(`/admin/users?q=${t}&sort=name&dir=desc`)).text();
		expect(html.indexOf(`Zoe ${t}`)).toBeGreaterThan(-1);
		expect(html.indexOf(`Zoe ${t}`)).toBeLessThan(html.indexOf(`Amy ${t}`));
		expect(html).toContain('aria-sort="descending"');
	});
});

describe('a group’s bookings', () => {
	async function setUp() {
		const group = await makeGroup('lists');
		const boxId = await makeBox();
		const t = tag();
		const who = await person(t, 'Booker');
		const book = async (
			startAt: Date,
			purpose: string,
			status: (typeof bookings.$inferInsert)['status'] = 'confirmed'
		) => {
			const endAt = new Date(startAt.getTime() + 2 * HOUR);
			await testDb().insert(bookings).values({
				boxId,
				userId: who,
				groupId: group.id,
				startAt,
				endAt,
				blockedUntil: endAt,
				purpose,
				status
			});
		};
		// Long ago, last week, and three ahead.
		await book(new Date(NOW.getTime() - 90 * DAY), 'Old titration', 'completed');
		await book(new Date(NOW.getTime() - 7 * DAY), 'Recent synthesis', 'completed');
		await book(new Date(NOW.getTime() + 1 * DAY), 'Next synthesis');
		await book(new Date(NOW.getTime() + 2 * DAY), 'Later weighing', 'cancelled');
		await book(new Date(NOW.getTime() + 3 * DAY), 'Last weighing');
		return { group, t };
	}
	const purposes = (rows: { purpose: string }[]) => rows.map((b) => b.purpose);

	it('shows the last month and ahead by default, newest first, with the total', async () => {
		const { group } = await setUp();
		const page = await groupBookingsPage(group.id, query(groupBookingsList, {}, 25), NOW);
		expect(page.view.total).toBe(4);
		expect(purposes(page.rows)).toEqual([
			'Last weighing',
			'Later weighing',
			'Next synthesis',
			'Recent synthesis'
		]);
	});

	it('chooses the period, filters by status, searches and sorts', async () => {
		const { group, t } = await setUp();
		const list = (params: Record<string, string>) =>
			groupBookingsPage(group.id, query(groupBookingsList, params, 25), NOW);

		expect((await list({ period: 'all' })).view.total).toBe(5);
		expect(purposes((await list({ period: 'past' })).rows)).toEqual([
			'Recent synthesis',
			'Old titration'
		]);
		expect((await list({ period: 'ahead' })).view.total).toBe(3);
		expect(purposes((await list({ period: 'all', status: 'cancelled' })).rows)).toEqual([
			'Later weighing'
		]);
		expect(purposes((await list({ period: 'all', q: 'synthesis' })).rows)).toEqual([
			'Next synthesis',
			'Recent synthesis'
		]);
		// Who booked is found too.
		expect((await list({ period: 'all', q: `booker ${t}` })).view.total).toBe(5);
		expect(purposes((await list({ period: 'all', sort: 'when', dir: 'asc' })).rows)[0]).toBe(
			'Old titration'
		);
	});

	it('pages the whole list instead of stopping at a cut-off, a page past the end showing the last', async () => {
		const { group } = await setUp();
		const past = await groupBookingsPage(
			group.id,
			query(groupBookingsList, { period: 'all', page: '40' }),
			NOW
		);
		expect(past.view).toMatchObject({ total: 5, pages: 3, page: 3 });
		expect(purposes(past.rows)).toEqual(['Old titration']);
	});
});

describe('a person’s notices', () => {
	it('pages newest first, filters the unread, and counts each view', async () => {
		const me = await makeUser('member');
		const other = await makeUser('member');
		for (let i = 1; i <= 5; i++) {
			await testDb()
				.insert(notifications)
				.values({
					userId: me.id,
					kind: 'test',
					title: `Notice ${i}`,
					body: '',
					readAt: i % 2 === 0 ? NOW : null
				});
		}
		await testDb()
			.insert(notifications)
			.values({ userId: other.id, kind: 'test', title: 'Not mine', body: '' });

		const all = await notificationsPage(me.id, query(notificationsList, {}));
		expect(all.view.total).toBe(5);
		expect(all.rows.map((n) => n.title)).toEqual(['Notice 5', 'Notice 4']);

		const unread = await notificationsPage(me.id, query(notificationsList, { show: 'unread' }, 25));
		expect(unread.rows.map((n) => n.title)).toEqual(['Notice 5', 'Notice 3', 'Notice 1']);

		const oldest = await notificationsPage(me.id, query(notificationsList, { dir: 'asc' }));
		expect(oldest.rows.map((n) => n.title)).toEqual(['Notice 1', 'Notice 2']);

		const past = await notificationsPage(me.id, query(notificationsList, { page: '7' }));
		expect(past.view.page).toBe(3);
		expect(past.rows.map((n) => n.title)).toEqual(['Notice 1']);

		// The page: only the unread, with the total beside them.
		const client = await signedIn(me);
		const html = await (await client.get('/notifications?show=unread')).text();
		expect(html).toContain('Notice 3');
		expect(html).not.toContain('Notice 4');
		expect(html).toContain('3 in all');
	});
});
