// What the dashboard shows, by role, in a handful of statements: the person, their next
// bookings, the boxes and their standing in every module for everyone (dashboard-read.ts);
// upkeep due for managers, who needs training and the open requests for trainers, the month
// so far for a PI. The shell's counts come from the layout (services/shell.ts).
import { sql } from 'drizzle-orm';
import {
	EXPIRY_WARNING_DAYS,
	standingByPersonAndModule,
	type CertificationState
} from '$lib/domain/certifications';
import { hasRole, type Role } from '$lib/domain/roles';
import { bookingPath, isLive } from '$lib/domain/training-requests';
import { db } from '../db';
import type { BoxSummary } from './boxes';
import { upcomingBookingsOf } from './calendar';
import { aboutMe, boxSummaries, moduleStandings, type LedGroup } from './dashboard-read';
import { dueTasks } from './maintenance';
import { usageThisMonthFor } from './statements';
import { openRequestsFor } from './training-requests';

/** How many of the person's next bookings the dashboard lists. */
const NEXT_BOOKINGS = 5;

/** People with no certification at all, listed by name, at most this many. */
const UNTRAINED_SHOWN = 50;

/** Raw rows through drizzle carry DATETIME as "YYYY-MM-DD hh:mm:ss" text, in UTC. */
const utc = (value: string) => new Date(`${value.replace(' ', 'T')}Z`);

type NeedRow = {
	kind: 'renewal' | 'untrained';
	user_id: number;
	name: string;
	email: string | null;
	module_id: number | null;
	module_name: string | null;
	granted_at: string | null;
	expires_at: string | null;
	revoked_at: string | null;
};

/**
 * For a trainer, in one statement: people whose certification in a module they teach has
 * lapsed or lapses within the warning window, and active members holding no certification
 * at all (any grant, even revoked or lapsed, counts as having started).
 */
export async function trainingNeeds(trainerId: number, now = new Date()) {
	const [rows] = (await db.execute(sql`
		(SELECT 'renewal' AS kind, u.id AS user_id, u.name, NULL AS email, c.module_id,
			tm.name AS module_name, c.granted_at, c.expires_at, c.revoked_at
		FROM certifications c
			JOIN users u ON u.id = c.user_id
			JOIN training_modules tm ON tm.id = c.module_id
		WHERE c.module_id IN (SELECT mt.module_id FROM module_trainers mt WHERE mt.user_id = ${trainerId})
			AND u.status = 'active')
		UNION ALL
		(SELECT 'untrained', u.id, u.name, u.email, NULL, NULL, NULL, NULL, NULL
		FROM users u
		WHERE u.status = 'active' AND u.role = 'member'
			AND NOT EXISTS (SELECT 1 FROM certifications c WHERE c.user_id = u.id)
		ORDER BY u.name LIMIT ${UNTRAINED_SHOWN})
	`)) as unknown as [NeedRow[]];
	const soon = new Date(now.getTime() + EXPIRY_WARNING_DAYS * 86_400_000);
	const grants = rows
		.filter((r) => r.kind === 'renewal')
		.map((r) => ({
			userId: r.user_id,
			name: r.name,
			moduleId: r.module_id!,
			moduleName: r.module_name!,
			grantedAt: utc(r.granted_at!),
			expiresAt: utc(r.expires_at!),
			revokedAt: r.revoked_at ? utc(r.revoked_at) : null
		}))
		.sort((a, b) => a.expiresAt.getTime() - b.expiresAt.getTime());
	// Where each person stands in each module: an older live grant outranks a newer revoked one.
	const renewals = [...standingByPersonAndModule(grants, now).values()]
		.filter((c) => !c.revokedAt && c.expiresAt < soon)
		.map((c) => ({
			name: c.name,
			moduleName: c.moduleName,
			expiresAt: c.expiresAt,
			lapsed: c.expiresAt <= now
		}));
	const untrained = rows
		.filter((r) => r.kind === 'untrained')
		.map((r) => ({ id: r.user_id, name: r.name, email: r.email! }));
	return { renewals, untrained };
}

/** For a PI: each group they lead, with its month so far (one read for all of them). */
export async function groupsUsage(groups: LedGroup[], now = new Date()) {
	if (!groups.length) return [];
	const usage = await usageThisMonthFor(groups, now);
	return groups.map((g) => ({ ...g, usage: usage.get(g.id)!.totals }));
}

type Standing = {
	moduleId: number;
	moduleName: string;
	state: CertificationState;
	trainers: string[];
	prerequisiteIds: number[];
	requestedAt: Date | null;
};

/**
 * For someone who cannot book any box yet: per box, the modules they still need, who
 * teaches each, what it needs first, and whether they have asked for it. Null when some box
 * is open to them (or there are none).
 */
export function firstBookingPath(
	boxes: Pick<BoxSummary, 'id' | 'name' | 'requiredModules'>[],
	standings: Standing[]
) {
	const held = new Set(standings.filter((c) => isLive(c.state)).map((c) => c.moduleId));
	const path = bookingPath(boxes, held);
	if (path.canBookAny) return null;
	const byId = new Map(standings.map((s) => [s.moduleId, s]));
	return path.boxes.map((b) => ({
		id: b.id,
		name: b.name,
		missing: b.missing.map((m) => {
			const module = byId.get(m.id);
			return {
				id: m.id,
				name: m.name,
				trainers: module?.trainers ?? [],
				needsFirst:
					module?.prerequisiteIds
						.filter((id) => !held.has(id))
						.map((id) => byId.get(id)?.moduleName ?? '') ?? [],
				requestedAt: module?.requestedAt ?? null
			};
		})
	}));
}

/**
 * Everything the dashboard shows beyond the shell, read side by side: six statements for a
 * member with the session and the shell, three more for a manager (upkeep, training needs,
 * requests), one more for a PI (the month so far).
 */
export async function dashboardFor(user: { id: number; role: Role }, now = new Date()) {
	const isManager = hasRole(user.role, 'manager');
	const isTrainer = hasRole(user.role, 'trainer');
	const [me, mine, boxes, standings, maintenance, needs, requests] = await Promise.all([
		aboutMe(user.id, isManager),
		upcomingBookingsOf(user.id, now),
		boxSummaries(now),
		moduleStandings(user.id, now),
		isManager ? dueTasks(now) : [],
		isTrainer ? trainingNeeds(user.id, now) : null,
		isTrainer ? openRequestsFor(user) : []
	]);
	return {
		group: me.group,
		next: mine.slice(0, NEXT_BOOKINGS),
		boxes,
		maintenance,
		failed: me.failed,
		needs,
		led: await groupsUsage(me.led, now),
		path: firstBookingPath(boxes, standings),
		requests: requests.map((r) => ({
			id: r.id,
			userName: r.userName,
			moduleName: r.moduleName,
			note: r.note,
			at: r.createdAt
		})),
		// A manager's warning: modules nobody can teach now.
		untaught: isManager
			? standings
					.filter((s) => !s.trainers.length)
					.map((s) => ({ id: s.moduleId, name: s.moduleName }))
			: [],
		// Held modules that are expiring, and ones that lapsed: both need a trainer.
		attention: standings
			.filter((c) => c.state === 'expiring' || c.state === 'expired')
			.map((c) => ({ module: c.moduleName, state: c.state, expiresAt: c.expiresAt }))
	};
}
