// Pieces of SQL that services need the same way, written once, and the booking check's
// locked read. They know the schema and the domain's types and constants, nothing of the
// services that use them.
import { getTableName, gte, inArray, sql, type SQL } from 'drizzle-orm';
import type { MySqlColumn } from 'drizzle-orm/mysql-core';
import type { HeldBooking, Hold, OutageSpan, Span } from '$lib/domain/booking-rules';
import type { AtmosphereState, BoxStatus } from '$lib/domain/boxes';
import type { Role } from '$lib/domain/roles';
import {
	LONGEST_HOLD_MS,
	LONGEST_PURGE_MS,
	holdingStatuses,
	openStatuses,
	type BookingStatus
} from '$lib/domain/bookings';
import type { Transaction } from './index';
import { bookings, type UserStatus } from './schema';

/**
 * The lower bound on bookings.start_at for a read of the bookings that reach into a window
 * opening at `at`: no hold (booking plus purge) lasts longer than LONGEST_HOLD_MS, so beside
 * `end_at > at` or `blocked_until > at` it changes no answer. It lets MariaDB scan the
 * (…, start_at) indexes from that point instead of from the first booking, so a box's (a
 * person's, a group's) history is never read whole.
 */
export const startsFrom = (at: Date) =>
	gte(bookings.startAt, new Date(at.getTime() - LONGEST_HOLD_MS));

/**
 * The group a person's bookings are billed to unless they choose another: the one they
 * joined first (their oldest active membership); NULL when they are in none. A scalar
 * subquery, so it fits a SELECT list or an UPDATE's SET. Spelled out in SQL: inside a
 * subquery the builder's column names lose their tables.
 */
export const defaultGroupId = (userId: number | MySqlColumn): SQL<number | null> =>
	(typeof userId === 'number'
		? withValues(defaultGroupText('?'), [userId])
		: sql.raw(defaultGroupText(`\`${getTableName(userId.table)}\`.\`${userId.name}\``))) as SQL<
		number | null
	>;

/** defaultGroupId's text, for a person named by `user` (a column, `?`, `@user`). */
const defaultGroupText = (user: string) => `(SELECT gm.group_id FROM group_memberships gm
		WHERE gm.user_id = ${user} AND gm.status = 'active' ORDER BY gm.id LIMIT 1)`;

type RawBox = {
	id: number;
	name: string;
	room: string;
	status: BoxStatus;
	atmosphere_state: AtmosphereState;
	slot_step_min: number;
	min_length_min: number;
	max_length_min: number;
	horizon_days: number;
	weekly_quota_min: number;
	purge_min: number;
	needs_approval: number;
	excluded_classes: string | string[];
};

type NearRow = {
	src: 'other' | 'mine' | 'outage';
	id: number;
	start_at: string | Date;
	end_at: string | Date;
	blocked_until: string | Date;
	status: string;
};

/**
 * DATETIME as it arrives: raw queries through drizzle get "YYYY-MM-DD hh:mm:ss" text in UTC,
 * the core pool (db/raw.ts) gets a Date.
 */
const utc = (value: string | Date) =>
	value instanceof Date ? value : new Date(`${value.replace(' ', 'T')}Z`);

function ruleBox(r: RawBox) {
	return {
		id: r.id,
		name: r.name,
		room: r.room,
		status: r.status,
		atmosphereState: r.atmosphere_state,
		slotStepMin: r.slot_step_min,
		minLengthMin: r.min_length_min,
		maxLengthMin: r.max_length_min,
		horizonDays: r.horizon_days,
		weeklyQuotaMin: r.weekly_quota_min,
		purgeMin: r.purge_min,
		needsApproval: Boolean(r.needs_approval),
		// mysql2 parses the column itself when the server flags it as JSON; MariaDB may not.
		excludedClasses:
			typeof r.excluded_classes === 'string'
				? (JSON.parse(r.excluded_classes) as string[])
				: r.excluded_classes
	};
}

export type BookingRequestRead = {
	boxId: number;
	userId: number;
	start: Date;
	end: Date;
	/** The span whose bookings of the user count for the quota (quotaSpan). */
	quota: { start: Date; end: Date };
	/** A booking being moved, which must not collide with itself. */
	ignoreBookingId?: number;
};

/** A list of fixed words (statuses) as SQL text: constants of the domain, never input. */
const words = (list: readonly string[]) => list.map((w) => `'${w.replace(/'/g, "''")}'`).join(', ');

/**
 * The booking check's lock: a write to the box row (db/locks.ts), which a Galera cluster
 * certifies, so two nodes cannot both book one slot. It must be the transaction's first
 * statement that reads: the reads after it see everything committed before it was granted.
 * Taken only for someone (@user set): a request whose session is unknown is refused without
 * queueing on the box (MariaDB sees an impossible WHERE and locks nothing).
 */
export const LOCK_SQL =
	'UPDATE boxes SET lock_version = lock_version + 1 WHERE id = ? AND @user IS NOT NULL';

/**
 * What the lock protects, as text with `?` placeholders (values from nearValues), for the
 * person in the session variable @user: the box's rules read with FOR UPDATE, then open
 * bookings whose hold reaches the request or that start within the longest purge after it,
 * the person's held bookings in the quota span, and the outages that near. A superset: the
 * box's own purge time is only known once its row is in hand, so checkBooking decides what
 * collides. Each booking branch is a range scan on (box_id, start_at) with a lower bound
 * (startsFrom), so the box's history is never read whole. Written once for the booking
 * decision (services/booking-decision.ts), which sends it with the gates in its first
 * batch, and for a move (lockBoxForBooking).
 */
export const NEAR_SQL = `SELECT id, name, room, status, atmosphere_state, slot_step_min,
	min_length_min, max_length_min, horizon_days, weekly_quota_min, purge_min, needs_approval,
	excluded_classes FROM boxes WHERE id = ? AND @user IS NOT NULL FOR UPDATE;
SELECT 'other' AS src, id, start_at, end_at, blocked_until, status FROM bookings
	WHERE box_id = ? AND status IN (${words(openStatuses)}) AND id <> ?
	AND start_at < ? AND blocked_until > ? AND start_at >= ?
UNION ALL
SELECT 'mine', id, start_at, end_at, blocked_until, status FROM bookings
	WHERE box_id = ? AND user_id = @user AND id <> ? AND status IN (${words(holdingStatuses)})
	AND start_at < ? AND end_at > ? AND start_at >= ?
UNION ALL
SELECT 'outage', id, start_at, end_at, end_at, reason FROM outages
	WHERE box_id = ? AND start_at < ? AND end_at > ?`;

/** The values of NEAR_SQL's placeholders, in order. */
export function nearValues(q: Omit<BookingRequestRead, 'userId'>): unknown[] {
	const ignore = q.ignoreBookingId ?? 0;
	const purgeBound = new Date(q.end.getTime() + LONGEST_PURGE_MS);
	const from = (at: Date) => new Date(at.getTime() - LONGEST_HOLD_MS);
	return [
		q.boxId,
		...[q.boxId, ignore, purgeBound, q.start, from(q.start)],
		...[q.boxId, ignore, q.quota.end, q.quota.start, from(q.quota.start)],
		...[q.boxId, purgeBound, q.start]
	];
}

/** NEAR_SQL's answers (its box's rows, its near rows), as checkBooking takes them. */
export function readNear([lockedRows, rows]: unknown[]) {
	const box = (lockedRows as RawBox[])[0];
	if (!box) return null;
	const near = rows as NearRow[];
	const span = (r: NearRow): Span => ({ startAt: utc(r.start_at), endAt: utc(r.end_at) });
	const of = (src: NearRow['src']) => near.filter((r) => r.src === src);
	return {
		box: ruleBox(box),
		others: of('other').map((r): HeldBooking => ({
			id: r.id,
			...span(r),
			blockedUntil: utc(r.blocked_until),
			status: r.status as BookingStatus
		})),
		outages: of('outage').map((r): OutageSpan => ({ id: r.id, ...span(r), reason: r.status })),
		userBookings: of('mine').map(span)
	};
}

/**
 * The gates of a booking, for the person in @user: the box's required modules joined to the
 * person's certifications in them, then the person (with their session, when the request's
 * session is checked here), their e-mail setting and billing: the group they joined first
 * (defaultGroupId), and whether they are in the group they chose (asked only when they chose
 * one: a subquery fewer for everyone else). They do not race with other bookings, so they
 * are read outside the lock. Values from gateValues.
 */
const gatesSql = (chosenGroup: boolean) => `SELECT m.id AS module_id, m.name, c.granted_at,
	c.expires_at FROM box_required_modules r
	JOIN training_modules m ON m.id = r.module_id
	LEFT JOIN certifications c
		ON c.module_id = r.module_id AND c.user_id = @user AND c.revoked_at IS NULL
	WHERE r.box_id = ? ORDER BY r.module_id;
SELECT u.id AS user_id, s.expires_at, u.email, u.name, u.role, u.status, u.email_confirmations,
	${defaultGroupText('u.id')} AS default_group,
	${
		chosenGroup
			? `EXISTS (SELECT 1 FROM group_memberships gm
		WHERE gm.user_id = u.id AND gm.group_id = ? AND gm.status = 'active')`
			: '?'
	} AS in_chosen_group
	FROM users u LEFT JOIN sessions s ON s.id = ? WHERE u.id = @user`;
export const GATES_SQL = { chosen: gatesSql(true), own: gatesSql(false) };

/** GATES_SQL's text for `groupId` (the group the person chose, if any) and its values. */
export function gates(boxId: number, groupId?: number, sessionId?: string) {
	return {
		text: groupId === undefined ? GATES_SQL.own : GATES_SQL.chosen,
		values: [boxId, groupId ?? null, sessionId ?? null]
	};
}

type ModuleRow = {
	module_id: number;
	name: string;
	granted_at: Date | null;
	expires_at: Date | null;
};

/** The person as GATES_SQL reads them (the session's columns null unless it was asked for). */
export type GatesPerson = {
	user_id: number;
	expires_at: Date;
	email: string;
	name: string;
	role: Role;
	status: UserStatus;
	email_confirmations: number;
	default_group: number | null;
	in_chosen_group: number | null;
};

/** GATES_SQL's answers as checkBooking takes them, and the person (undefined: nobody). */
export function readGates([moduleRows, people]: unknown[]) {
	const rows = moduleRows as ModuleRow[];
	const [person] = people as GatesPerson[];
	return {
		requiredModules: rows.map((m) => ({ id: m.module_id, name: m.name })),
		certs: rows.flatMap((m) =>
			m.granted_at && m.expires_at
				? [{ moduleId: m.module_id, grantedAt: m.granted_at, expiresAt: m.expires_at }]
				: []
		),
		person: person as GatesPerson | undefined
	};
}

/** `?`-placeholder text and its values as drizzle SQL, for text shared with the raw path. */
function withValues(text: string, values: unknown[]): SQL {
	const parts = text.split('?');
	if (parts.length !== values.length + 1) throw new Error('placeholders and values differ');
	return sql.join(
		parts.flatMap((part, i) =>
			i < values.length ? [sql.raw(part), sql`${values[i]}`] : [sql.raw(part)]
		)
	);
}

/**
 * The lock and NEAR_SQL in a drizzle transaction, in one round trip: for a move
 * (services/bookings.ts changeBooking). Null when there is no such box.
 */
export async function lockBoxForBooking(tx: Transaction, q: BookingRequestRead) {
	// SET is no read: it may come first without fixing the snapshot before the lock.
	const text = `SET @user = ?;\n${LOCK_SQL};\n${NEAR_SQL}`;
	const values = [q.userId, q.boxId, ...nearValues(q)];
	const [results] = (await tx.execute(withValues(text, values))) as unknown as [unknown[]];
	return readNear(results.slice(2));
}

/**
 * What holds the box over [start, end): held bookings (their hold, purge included, or up to
 * a no-show's freeing) and outages. For a watch, read under the box lock, so nothing can
 * take the time between this read and the caller's decision.
 */
export async function holdsWithin(tx: Transaction, boxId: number, start: Date, end: Date) {
	const [rows] = (await tx.execute(sql`
		SELECT 'booking' AS src, start_at, blocked_until AS end_at FROM bookings
		WHERE box_id = ${boxId} AND ${inArray(bookings.status, holdingStatuses)}
			AND start_at < ${end} AND blocked_until > ${start} AND ${startsFrom(start)}
		UNION ALL
		SELECT 'outage', start_at, end_at FROM outages
		WHERE box_id = ${boxId} AND start_at < ${end} AND end_at > ${start}
	`)) as unknown as [{ src: 'booking' | 'outage'; start_at: string; end_at: string }[]];
	const of = (src: 'booking' | 'outage') => rows.filter((r) => r.src === src);
	return {
		holds: of('booking').map((r): Hold => ({
			startAt: utc(r.start_at),
			blockedUntil: utc(r.end_at)
		})),
		outages: of('outage').map((r): Span => ({ startAt: utc(r.start_at), endAt: utc(r.end_at) }))
	};
}
