// The admin's list of people: paged in SQL, since a facility's accounts only ever grow.
import { and, asc, count, eq, inArray, sql } from 'drizzle-orm';
import type { ListQuery, ListSpec } from '$lib/domain/listing';
import { roles, type Role } from '$lib/domain/roles';
import { db } from '../db';
import {
	groupMemberships,
	moduleTrainers,
	researchGroups,
	trainingModules,
	users,
	userStatuses,
	type UserStatus
} from '../db/schema';
import { matchesWords, orderOf, pageInSql } from '../listing';

export const usersList = {
	sorts: ['name', 'email', 'role', 'status', 'created'],
	defaultSort: 'name',
	defaultDir: 'asc',
	filters: { role: roles, status: userStatuses },
	perPage: 25
} as const satisfies ListSpec;

export type UsersQuery = ListQuery<(typeof usersList.sorts)[number], 'role' | 'status'>;

export type UserRow = {
	id: number;
	name: string;
	email: string;
	role: Role;
	status: UserStatus;
	createdAt: Date;
	/** Groups they are in or asking to join, by name. */
	groups: string;
	/** The modules they teach (and so may certify for), by name. */
	teaches: string[];
};

/**
 * One page of people, found by name or e-mail, filtered by role and account status, with
 * the total; their groups and the modules they teach are read for that page only.
 */
export async function usersPage(query: UsersQuery) {
	const where = and(
		query.filters.role ? eq(users.role, query.filters.role as Role) : undefined,
		query.filters.status ? eq(users.status, query.filters.status as UserStatus) : undefined,
		matchesWords(query.q, [users.name, users.email])
	);
	return pageInSql(
		query,
		async () => {
			const [row] = await db.select({ n: count() }).from(users).where(where);
			return row.n;
		},
		async (limit, offset): Promise<UserRow[]> => {
			const page = await db
				.select({
					id: users.id,
					name: users.name,
					email: users.email,
					role: users.role,
					status: users.status,
					createdAt: users.createdAt
				})
				.from(users)
				.where(where)
				.orderBy(
					...orderOf(
						query,
						{
							name: users.name,
							email: users.email,
							role: users.role,
							status: users.status,
							created: users.createdAt
						},
						users.id
					)
				)
				.limit(limit)
				.offset(offset);
			const ids = page.map((u) => u.id);
			if (!ids.length) return [];
			const [memberships, taught] = await Promise.all([
				db
					.select({
						userId: groupMemberships.userId,
						groups: sql<string>`GROUP_CONCAT(${researchGroups.name} ORDER BY ${researchGroups.name} SEPARATOR ', ')`
					})
					.from(groupMemberships)
					.innerJoin(researchGroups, eq(researchGroups.id, groupMemberships.groupId))
					.where(
						and(
							inArray(groupMemberships.userId, ids),
							inArray(groupMemberships.status, ['active', 'pending'])
						)
					)
					.groupBy(groupMemberships.userId),
				db
					.select({ userId: moduleTrainers.userId, name: trainingModules.name })
					.from(moduleTrainers)
					.innerJoin(trainingModules, eq(trainingModules.id, moduleTrainers.moduleId))
					.where(inArray(moduleTrainers.userId, ids))
					.orderBy(asc(trainingModules.name))
			]);
			const groups = new Map(memberships.map((m) => [m.userId, m.groups]));
			const teaches = new Map<number, string[]>();
			for (const t of taught) teaches.set(t.userId, [...(teaches.get(t.userId) ?? []), t.name]);
			return page.map((u) => ({
				...u,
				groups: groups.get(u.id) ?? '',
				teaches: teaches.get(u.id) ?? []
			}));
		}
	);
}
