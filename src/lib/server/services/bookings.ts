import { and, asc, desc, eq, gt, gte, inArray, lt, sql } from 'drizzle-orm';
import { DateTime } from 'luxon';
import { checkBooking, refusalStatus, type Reason } from '$lib/domain/booking-rules';
import { LONGEST_HOLD_MS, LONGEST_PURGE_MS, type BookingStatus } from '$lib/domain/bookings';
import { hasRole } from '$lib/domain/roles';
import { isoInZone } from '$lib/domain/time';
import type { BookingInput } from '$lib/validation/bookings';
import { config } from '../config';
import { db, type Transaction } from '../db';
import {
	groupMemberships,
	bookings,
	boxes,
	boxRequiredModules,
	certifications,
	outages,
	trainingModules,
	users,
	type Booking,
	type Box
} from '../db/schema';
import type { Actor } from './accounts';
import { audit } from './audit';
import { forbidden, notFound, ServiceError } from './errors';
import { bookingConfirmed } from '../mail/messages';
import { enqueue } from '../mail/outbox';
import { transaction } from '../db/transaction';

export type PublicBooking = {
	id: number;
	boxId: number;
	userId: number;
	start: string;
	end: string;
	purgeUntil: string | null;
	purpose: string;
	chemicalClasses: string[];
	volatileSolvents: boolean;
	status: BookingStatus;
	cancelReason: string | null;
	cancelCause: string | null;
	/** The outage that cancelled it, when one did. */
	outageId: number | null;
};

type BookingView = Pick<
	Booking,
	| 'id'
	| 'boxId'
	| 'userId'
	| 'startAt'
	| 'endAt'
	| 'blockedUntil'
	| 'purpose'
	| 'chemicalClasses'
	| 'volatileSolvents'
	| 'status'
	| 'cancelReason'
	| 'cancelCause'
	| 'outageId'
>;

export function toPublic(b: BookingView, tz = config.facilityTz): PublicBooking {
	return {
		id: b.id,
		boxId: b.boxId,
		userId: b.userId,
		start: isoInZone(b.startAt, tz),
		end: isoInZone(b.endAt, tz),
		purgeUntil: b.blockedUntil > b.endAt ? isoInZone(b.blockedUntil, tz) : null,
		purpose: b.purpose,
		chemicalClasses: b.chemicalClasses,
		volatileSolvents: b.volatileSolvents,
		status: b.status,
		cancelReason: b.cancelReason,
		cancelCause: b.cancelCause,
		outageId: b.outageId
	};
}

/**
 * Books a free time offered after an outage cancelled `fromBookingId`: the same purpose,
 * chemicals and billing group as the booking it replaces, through the same rules as any.
 */
export async function rebook(
	actor: Actor,
	fromBookingId: number,
	slot: { boxId: number; start: Date; end: Date },
	now = new Date()
) {
	const original = await getBooking(actor, fromBookingId);
	if (original.userId !== actor.id) throw notFound('The booking');
	return createBooking(
		actor,
		{
			...slot,
			purpose: original.purpose,
			chemicalClasses: original.chemicalClasses,
			volatileSolvents: original.volatileSolvents,
			groupId: original.groupId ?? undefined
		},
		now
	);
}

/** One booking, for its holder or a manager. */
export async function getBooking(actor: Actor, id: number) {
	const [booking] = await db.select().from(bookings).where(eq(bookings.id, id));
	if (!booking) throw notFound('The booking');
	if (booking.userId !== actor.id && !hasRole(actor.role, 'manager'))
		throw forbidden('You can only see your own bookings.');
	return booking;
}

/** The ISO weeks (facility zone) a span touches, as one UTC window. */
function weeksWindow(start: Date, end: Date) {
	const from = DateTime.fromJSDate(start, { zone: config.facilityTz }).startOf('week');
	const to = DateTime.fromJSDate(end, { zone: config.facilityTz })
		.startOf('week')
		.plus({ weeks: 1 });
	return { from: from.toJSDate(), to: to.toJSDate() };
}

/** What does not race with other bookings: read before the box lock is taken. */
async function readGates(userId: number, boxId: number) {
	const [requiredModules, certs, [person]] = await Promise.all([
		db
			.select({ id: trainingModules.id, name: trainingModules.name })
			.from(boxRequiredModules)
			.innerJoin(trainingModules, eq(trainingModules.id, boxRequiredModules.moduleId))
			.where(eq(boxRequiredModules.boxId, boxId)),
		db
			.select({
				moduleId: certifications.moduleId,
				grantedAt: certifications.grantedAt,
				expiresAt: certifications.expiresAt
			})
			.from(certifications)
			.where(and(eq(certifications.userId, userId), sql`${certifications.revokedAt} IS NULL`)),
		db
			.select({
				email: users.email,
				name: users.name,
				emailConfirmations: users.emailConfirmations,
				// The group billed for the booking: the booker's oldest active membership (the
				// group they joined first), so joining another group later moves nothing.
				// Spelled out: inside a subquery the builder's column names lose their tables.
				groupId: sql<
					number | null
				>`(SELECT gm.group_id FROM group_memberships gm WHERE gm.user_id = users.id AND gm.status = 'active' ORDER BY gm.id LIMIT 1)`
			})
			.from(users)
			.where(eq(users.id, userId))
	]);
	return { requiredModules, certs, person };
}

type NearRow = {
	src: 'other' | 'mine' | 'outage';
	id: number;
	start_at: string;
	end_at: string;
	blocked_until: string;
	status: string;
};

type RawBox = {
	id: number;
	name: string;
	room: string;
	status: Box['status'];
	atmosphere_state: Box['atmosphereState'];
	slot_step_min: number;
	min_length_min: number;
	max_length_min: number;
	horizon_days: number;
	weekly_quota_min: number;
	purge_min: number;
	needs_approval: number;
	excluded_classes: string | string[];
};
const BOX_RULE_COLUMNS =
	'id, name, room, status, atmosphere_state, slot_step_min, min_length_min, max_length_min, horizon_days, weekly_quota_min, purge_min, needs_approval, excluded_classes';

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

/** Raw queries through drizzle get DATETIME as "YYYY-MM-DD hh:mm:ss" text, in UTC. */
const utc = (value: string) => new Date(`${value.replace(' ', 'T')}Z`);

/**
 * Locks the box row, then reads in one round trip what the lock protects: held bookings
 * whose time or purge reaches into ours (or that start inside our purge), the user's own
 * bookings in the ISO weeks touched (quota), and outages. Each branch is a range scan on
 * (box_id, start_at) with a lower bound, so the box's history is never read whole.
 */
async function evaluate(
	tx: Transaction,
	userId: number,
	input: BookingInput,
	now: Date,
	gates: Awaited<ReturnType<typeof readGates>>,
	ignoreBookingId = 0
) {
	// The longest purge and the weeks touched bound the reads; the box's own purge time is
	// applied below, once its row is in hand.
	const purgeBound = new Date(input.end.getTime() + LONGEST_PURGE_MS);
	const week = weeksWindow(input.start, input.end);
	const from = new Date(input.start.getTime() - LONGEST_HOLD_MS);
	const weekFrom = new Date(week.from.getTime() - LONGEST_HOLD_MS);
	// One round trip: the lock, then (in the same transaction, after it) what it protects.
	const [[lockedRows, rows]] = (await tx.execute(sql`
		SELECT ${sql.raw(BOX_RULE_COLUMNS)} FROM boxes WHERE id = ${input.boxId} FOR UPDATE;
		SELECT 'other' AS src, id, start_at, end_at, blocked_until, status FROM bookings
		WHERE box_id = ${input.boxId} AND status IN ('pending', 'confirmed') AND id <> ${ignoreBookingId}
			AND start_at < ${purgeBound} AND blocked_until > ${input.start} AND start_at >= ${from}
		UNION ALL
		SELECT 'mine', id, start_at, end_at, blocked_until, status FROM bookings
		WHERE box_id = ${input.boxId} AND user_id = ${userId} AND id <> ${ignoreBookingId}
			AND status IN ('pending', 'confirmed', 'completed', 'no_show')
			AND start_at < ${week.to} AND end_at > ${week.from} AND start_at >= ${weekFrom}
		UNION ALL
		SELECT 'outage', id, start_at, end_at, end_at, reason FROM outages
		WHERE box_id = ${input.boxId} AND start_at < ${purgeBound} AND end_at > ${input.start}
	`)) as unknown as [[RawBox[], NearRow[]]];
	if (!lockedRows.length)
		throw new ServiceError(404, 'The box was not found.', { fields: { boxId: 'No such box.' } });
	const box = ruleBox(lockedRows[0]);
	const purgeEnd = new Date(input.end.getTime() + box.purgeMin * 60_000);

	const held = (r: NearRow) => ({ startAt: utc(r.start_at), endAt: utc(r.end_at) });
	const result = checkBooking(
		{
			start: input.start,
			end: input.end,
			volatileSolvents: input.volatileSolvents,
			chemicalClasses: input.chemicalClasses
		},
		{
			now,
			tz: config.facilityTz,
			box: { ...box, requiredModules: gates.requiredModules },
			// Read up to the longest purge; keep what reaches into this box's own purge.
			certifications: gates.certs,
			others: rows
				.filter((r) => r.src === 'other' && utc(r.start_at) < purgeEnd)
				.map((r) => ({
					id: r.id,
					...held(r),
					blockedUntil: utc(r.blocked_until),
					status: r.status as BookingStatus
				})),
			outages: rows
				.filter((r) => r.src === 'outage' && utc(r.start_at) < purgeEnd)
				.map((r) => ({ id: r.id, ...held(r), reason: r.status })),
			userBookings: rows.filter((r) => r.src === 'mine').map(held)
		}
	);
	return { box, result, blockedUntil: input.volatileSolvents ? purgeEnd : input.end };
}

function reasonsForClient(reasons: Reason[]) {
	return reasons.map((r) => ({
		code: r.code,
		message: r.message,
		...(r.conflict
			? {
					conflict: {
						kind: r.conflict.kind,
						id: r.conflict.id,
						start: isoInZone(r.conflict.start, config.facilityTz),
						end: isoInZone(r.conflict.end, config.facilityTz)
					}
				}
			: {})
	}));
}

function refusal(reasons: Reason[], status: 409 | 422): ServiceError {
	const details = { reasons: reasonsForClient(reasons) };
	if (status === 409) {
		return new ServiceError(409, 'Someone else holds that time on the box.', {
			...details,
			conflicts: details.reasons.map((r) => r.conflict)
		});
	}
	return new ServiceError(422, 'The booking breaks the box’s rules.', details);
}

/**
 * Creates a booking. The box row is locked (SELECT … FOR UPDATE) before anything that
 * overlaps is read, so two requests for the same slot are serialised by MariaDB and
 * never both succeed.
 */
export async function createBooking(actor: Actor, input: BookingInput, now = new Date()) {
	const gates = await readGates(actor.id, input.boxId);
	const groupId = input.groupId ?? gates.person?.groupId ?? null;
	if (input.groupId !== undefined) {
		const [member] = await db
			.select({ id: groupMemberships.id })
			.from(groupMemberships)
			.where(
				and(
					eq(groupMemberships.userId, actor.id),
					eq(groupMemberships.groupId, input.groupId),
					eq(groupMemberships.status, 'active')
				)
			);
		if (!member)
			throw new ServiceError(400, 'You can only bill a booking to a group you are in.', {
				fields: { groupId: 'Choose one of your groups.' }
			});
	}
	return transaction(async (tx) => {
		const { box, result, blockedUntil } = await evaluate(tx, actor.id, input, now, gates);
		const status = refusalStatus(result);
		if (status) throw refusal(result.reasons, status);

		const values = {
			boxId: box.id,
			userId: actor.id,
			groupId,
			startAt: input.start,
			endAt: input.end,
			blockedUntil,
			purpose: input.purpose,
			chemicalClasses: input.chemicalClasses,
			volatileSolvents: input.volatileSolvents,
			status: (box.needsApproval ? 'pending' : 'confirmed') as BookingStatus,
			confirmedAt: box.needsApproval ? null : now
		};
		const [created] = await tx.insert(bookings).values(values).$returningId();
		await audit(tx, {
			actorId: actor.id,
			action: 'booking.created',
			entity: 'booking',
			entityId: created.id,
			details: {
				boxId: box.id,
				start: input.start.toISOString(),
				end: input.end.toISOString(),
				status: values.status
			}
		});
		if (values.status === 'confirmed' && gates.person?.emailConfirmations) {
			await queueConfirmation(
				tx,
				{ id: actor.id, ...gates.person },
				{ id: created.id, ...values, sequence: 0 },
				box
			);
		}
		return { id: created.id, ...values, cancelReason: null, cancelCause: null, outageId: null };
	});
}

async function queueConfirmation(
	tx: Transaction,
	person: { id: number; email: string; name: string },
	b: { id: number; startAt: Date; endAt: Date; purpose: string; sequence: number },
	box: { name: string; room: string }
) {
	const message = bookingConfirmed({ ...b, boxName: box.name, room: box.room }, person);
	await enqueue(tx, person, message, `booking:${b.id}:confirmed:${b.sequence}`);
}

/** Owner or manager cancels a pending or confirmed booking that has not ended. */
export async function cancelBooking(
	actor: Actor,
	id: number,
	reason: string | undefined,
	now = new Date()
) {
	return transaction(async (tx) => {
		const [booking] = await tx.select().from(bookings).where(eq(bookings.id, id)).for('update');
		if (!booking) throw notFound('The booking');
		const isOwner = booking.userId === actor.id;
		if (!isOwner && !hasRole(actor.role, 'manager'))
			throw forbidden('You can only cancel your own bookings.');
		if (booking.status !== 'pending' && booking.status !== 'confirmed') {
			throw new ServiceError(409, `This booking is already ${booking.status.replace('_', '-')}.`);
		}
		if (booking.endAt <= now) throw new ServiceError(409, 'This booking has already ended.');
		const cause = isOwner ? 'user' : 'manager';
		await tx
			.update(bookings)
			.set({
				status: 'cancelled',
				cancelCause: cause,
				cancelReason: reason || (isOwner ? 'Cancelled by the booker.' : 'Cancelled by a manager.'),
				cancelledAt: now,
				cancelledBy: actor.id,
				sequence: sql`${bookings.sequence} + 1`
			})
			.where(eq(bookings.id, id));
		await audit(tx, {
			actorId: actor.id,
			action: 'booking.cancelled',
			entity: 'booking',
			entityId: id,
			details: { cause, reason }
		});
		const [row] = await tx.select().from(bookings).where(eq(bookings.id, id));
		return row;
	});
}

/** Managers confirm or decline bookings on boxes that need approval. */
export async function decideBooking(
	actor: Actor,
	id: number,
	decision: 'approve' | 'decline',
	reason?: string,
	now = new Date()
) {
	if (!hasRole(actor.role, 'manager')) throw forbidden('Only a manager can approve bookings.');
	return transaction(async (tx) => {
		const [booking] = await tx.select().from(bookings).where(eq(bookings.id, id)).for('update');
		if (!booking) throw notFound('The booking');
		if (booking.status !== 'pending')
			throw new ServiceError(409, 'This booking is no longer waiting for approval.');
		if (decision === 'approve') {
			await tx
				.update(bookings)
				.set({
					status: 'confirmed',
					confirmedAt: now,
					decidedBy: actor.id,
					decidedAt: now,
					sequence: sql`${bookings.sequence} + 1`
				})
				.where(eq(bookings.id, id));
			const [person] = await tx
				.select({
					id: users.id,
					email: users.email,
					name: users.name,
					emailConfirmations: users.emailConfirmations
				})
				.from(users)
				.where(eq(users.id, booking.userId));
			const [box] = await tx
				.select({ name: boxes.name, room: boxes.room })
				.from(boxes)
				.where(eq(boxes.id, booking.boxId));
			if (person?.emailConfirmations && box) {
				await queueConfirmation(tx, person, { ...booking, sequence: booking.sequence + 1 }, box);
			}
		} else {
			await tx
				.update(bookings)
				.set({
					status: 'cancelled',
					cancelCause: 'manager',
					cancelReason: reason ?? 'Declined.',
					cancelledAt: now,
					cancelledBy: actor.id,
					decidedBy: actor.id,
					decidedAt: now,
					sequence: sql`${bookings.sequence} + 1`
				})
				.where(eq(bookings.id, id));
		}
		await audit(tx, {
			actorId: actor.id,
			action: decision === 'approve' ? 'booking.approved' : 'booking.declined',
			entity: 'booking',
			entityId: id,
			details: reason ? { reason } : undefined
		});
	});
}

export async function pendingBookings() {
	return db
		.select({
			id: bookings.id,
			startAt: bookings.startAt,
			endAt: bookings.endAt,
			purpose: bookings.purpose,
			chemicalClasses: bookings.chemicalClasses,
			volatileSolvents: bookings.volatileSolvents,
			boxName: boxes.name,
			userName: users.name,
			createdAt: bookings.createdAt
		})
		.from(bookings)
		.innerJoin(boxes, eq(boxes.id, bookings.boxId))
		.innerJoin(users, eq(users.id, bookings.userId))
		.where(eq(bookings.status, 'pending'))
		.orderBy(asc(bookings.startAt));
}

/** How many bookings wait for a manager: the shell's badge, on every page, so a count. */
export async function countPendingBookings(): Promise<number> {
	const [row] = await db
		.select({ n: sql<number>`count(*)` })
		.from(bookings)
		.where(eq(bookings.status, 'pending'));
	return Number(row?.n ?? 0);
}

export async function bookingsOf(userId: number, now = new Date()) {
	const rows = await db
		.select({
			id: bookings.id,
			boxId: bookings.boxId,
			boxName: boxes.name,
			gas: boxes.gas,
			startAt: bookings.startAt,
			endAt: bookings.endAt,
			purpose: bookings.purpose,
			status: bookings.status,
			cancelReason: bookings.cancelReason,
			cancelCause: bookings.cancelCause,
			volatileSolvents: bookings.volatileSolvents,
			checkInAt: bookings.checkInAt,
			checkOutAt: bookings.checkOutAt,
			cancelWindowHours: boxes.cancelWindowHours
		})
		.from(bookings)
		.innerJoin(boxes, eq(boxes.id, bookings.boxId))
		.where(eq(bookings.userId, userId))
		.orderBy(desc(bookings.startAt))
		.limit(500);
	const upcoming = rows.filter((b) => b.endAt > now && b.status !== 'cancelled').reverse();
	const past = rows.filter((b) => !(b.endAt > now && b.status !== 'cancelled'));
	return { upcoming, past };
}

export type CalendarEvent = {
	id: string;
	kind: 'booking' | 'pending' | 'purge' | 'outage';
	boxId: number;
	start: string;
	end: string;
	title: string;
	mine: boolean;
	bookingId?: number;
	outageId?: number;
	status?: BookingStatus;
};

/**
 * Bookings (with their purge buffers) and outages overlapping [start, end). The range
 * scan uses (box_id, start_at); the lower bound on start_at keeps it from reading the
 * box's whole history.
 */
export async function events(
	boxIds: number[] | 'all',
	start: Date,
	end: Date,
	viewerId: number
): Promise<CalendarEvent[]> {
	const tz = config.facilityTz;
	const boxFilter = boxIds === 'all' ? undefined : inArray(bookings.boxId, boxIds);
	const outageFilter = boxIds === 'all' ? undefined : inArray(outages.boxId, boxIds);
	const [bookingRows, outageRows] = await Promise.all([
		db
			.select({
				id: bookings.id,
				boxId: bookings.boxId,
				userId: bookings.userId,
				userName: users.name,
				startAt: bookings.startAt,
				endAt: bookings.endAt,
				blockedUntil: bookings.blockedUntil,
				status: bookings.status,
				purpose: bookings.purpose
			})
			.from(bookings)
			.innerJoin(users, eq(users.id, bookings.userId))
			.where(
				and(
					boxFilter,
					inArray(bookings.status, ['pending', 'confirmed', 'completed', 'no_show']),
					lt(bookings.startAt, end),
					gt(bookings.blockedUntil, start),
					gte(bookings.startAt, new Date(start.getTime() - LONGEST_HOLD_MS))
				)
			)
			.orderBy(asc(bookings.startAt)),
		db
			.select()
			.from(outages)
			.where(and(outageFilter, lt(outages.startAt, end), gt(outages.endAt, start)))
	]);
	const list: CalendarEvent[] = [];
	for (const b of bookingRows) {
		const mine = b.userId === viewerId;
		// A no-show holds the box only until it was marked; the rest of its slot is free.
		const noShow = b.status === 'no_show';
		const end = noShow && b.blockedUntil < b.endAt ? b.blockedUntil : b.endAt;
		list.push({
			id: `booking-${b.id}`,
			kind: b.status === 'pending' ? 'pending' : 'booking',
			boxId: b.boxId,
			start: isoInZone(b.startAt, tz),
			end: isoInZone(end > b.startAt ? end : b.endAt, tz),
			title: `${mine ? `You: ${b.purpose}` : b.userName}${noShow ? ' (no-show)' : ''}`,
			mine,
			bookingId: b.id,
			status: b.status
		});
		if (b.blockedUntil > b.endAt) {
			list.push({
				id: `purge-${b.id}`,
				kind: 'purge',
				boxId: b.boxId,
				start: isoInZone(b.endAt, tz),
				end: isoInZone(b.blockedUntil, tz),
				title: 'Purge',
				mine,
				bookingId: b.id
			});
		}
	}
	for (const o of outageRows) {
		list.push({
			id: `outage-${o.id}`,
			kind: 'outage',
			boxId: o.boxId,
			start: isoInZone(o.startAt, tz),
			end: isoInZone(o.endAt, tz),
			title: `Out of service: ${o.reason}`,
			mine: false,
			outageId: o.id
		});
	}
	return list;
}
