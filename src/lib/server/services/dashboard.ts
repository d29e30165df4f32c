// What each role's dashboard needs beyond the member's own bookings and certifications.
import { and, asc, count, eq, inArray, isNull } from 'drizzle-orm';
import {
	EXPIRY_WARNING_DAYS,
	standingByPersonAndModule,
	type CertificationState
} from '$lib/domain/certifications';
import { bookingPath, isLive } from '$lib/domain/training-requests';
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
import { listModules } from './training';
import { openRequestsOf } from './training-requests';

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

/**
 * For someone who cannot book any box yet: per box, the modules they still need, who
 * teaches each, what it needs first, and whether they have asked for it. Null when some box
 * is open to them (or there are none).
 */
export async function firstBookingPath(
	userId: number,
	boxes: { id: number; name: string; requiredModules: { id: number; name: string }[] }[],
	standings: { moduleId: number; state: CertificationState }[]
) {
	const held = new Set(standings.filter((c) => isLive(c.state)).map((c) => c.moduleId));
	const path = bookingPath(boxes, held);
	if (path.canBookAny) return null;
	const [modules, requests] = await Promise.all([listModules(), openRequestsOf(userId)]);
	return path.boxes.map((b) => ({
		id: b.id,
		name: b.name,
		missing: b.missing.map((m) => {
			const module = modules.find((x) => x.id === m.id);
			return {
				id: m.id,
				name: m.name,
				trainers: module?.trainers.map((t) => t.name) ?? [],
				needsFirst: module?.prerequisites.filter((p) => !held.has(p.id)).map((p) => p.name) ?? [],
				requestedAt: requests.find((r) => r.moduleId === m.id)?.createdAt ?? null
			};
		})
	}));
}
