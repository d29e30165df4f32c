// What each role's dashboard needs beyond the member's own bookings and certifications.
import { and, asc, count, eq, inArray, isNull } from 'drizzle-orm';
import { EXPIRY_WARNING_DAYS, standingByPersonAndModule } from '$lib/domain/certifications';
import { db } from '../db';
import {
	certifications,
	moduleTrainers,
	outbox,
	researchGroups,
	trainingModules,
	users
} from '../db/schema';
import { usageThisMonthFor } from './statements';

/**
 * For a trainer: people whose certification in a module they teach has lapsed or lapses
 * within the warning window, and active people holding no certification at all.
 */
export async function trainingNeeds(trainerId: number, now = new Date()) {
	const taught = await db
		.select({ moduleId: moduleTrainers.moduleId })
		.from(moduleTrainers)
		.where(eq(moduleTrainers.userId, trainerId));
	const soon = new Date(now.getTime() + EXPIRY_WARNING_DAYS * 86_400_000);
	const lapsing = taught.length
		? await db
				.select({
					userId: users.id,
					name: users.name,
					moduleId: certifications.moduleId,
					moduleName: trainingModules.name,
					grantedAt: certifications.grantedAt,
					expiresAt: certifications.expiresAt,
					revokedAt: certifications.revokedAt
				})
				.from(certifications)
				.innerJoin(users, eq(users.id, certifications.userId))
				.innerJoin(trainingModules, eq(trainingModules.id, certifications.moduleId))
				.where(
					and(
						inArray(
							certifications.moduleId,
							taught.map((t) => t.moduleId)
						),
						eq(users.status, 'active')
					)
				)
				.orderBy(asc(certifications.expiresAt))
		: [];
	// Where each person stands in each module: an older live grant outranks a newer revoked one.
	const newest = standingByPersonAndModule(lapsing, now);
	const renewals = [...newest.values()]
		.filter((c) => !c.revokedAt && c.expiresAt < soon)
		.map((c) => ({
			name: c.name,
			moduleName: c.moduleName,
			expiresAt: c.expiresAt,
			lapsed: c.expiresAt <= now
		}));
	const untrained = await db
		.select({ id: users.id, name: users.name, email: users.email })
		.from(users)
		.leftJoin(certifications, eq(certifications.userId, users.id))
		.where(and(eq(users.status, 'active'), eq(users.role, 'member'), isNull(certifications.id)))
		.orderBy(asc(users.name))
		.limit(50);
	return { renewals, untrained };
}

export async function failedMessages(): Promise<number> {
	const [row] = await db.select({ n: count() }).from(outbox).where(eq(outbox.status, 'failed'));
	return row?.n ?? 0;
}

/** For a PI: each group they lead, with its month so far (one read for all of them). */
export async function groupsUsage(piUserId: number, now = new Date()) {
	const groups = await db
		.select({ id: researchGroups.id, name: researchGroups.name, external: researchGroups.external })
		.from(researchGroups)
		.where(eq(researchGroups.piUserId, piUserId))
		.orderBy(asc(researchGroups.name));
	const usage = await usageThisMonthFor(groups, now);
	return groups.map((g) => ({ ...g, usage: usage.get(g.id)!.totals }));
}
