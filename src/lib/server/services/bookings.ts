import { and, asc, eq, isNull, sql } from 'drizzle-orm';
import { checkBooking, quotaSpan, refusalStatus, type Reason } from '$lib/domain/booking-rules';
import { openStatuses, type BookingStatus } from '$lib/domain/bookings';
import { hasRole } from '$lib/domain/roles';
import { isoInZone } from '$lib/domain/time';
import type { BookingInput } from '$lib/validation/bookings';
import { config } from '../config';
import { db, type Transaction } from '../db';
import { defaultGroupId, lockBoxForBooking } from '../db/queries';
import {
	groupMemberships,
	bookings,
	boxes,
	boxRequiredModules,
	certifications,
	trainingModules,
	users
} from '../db/schema';
import type { Actor } from './accounts';
import { audit } from './audit';
import { forbidden, notFound, ServiceError } from './errors';
import { bookingConfirmed } from '../mail/messages';
import { enqueue } from '../mail/outbox';
import { transaction } from '../db/transaction';

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
			.where(and(eq(certifications.userId, userId), isNull(certifications.revokedAt))),
		db
			.select({
				email: users.email,
				name: users.name,
				emailConfirmations: users.emailConfirmations,
				// The group billed for the booking, fixed when it is made: joining another group
				// later moves nothing.
				groupId: defaultGroupId(users.id)
			})
			.from(users)
			.where(eq(users.id, userId))
	]);
	return { requiredModules, certs, person };
}

/**
 * Locks the box row and reads what the lock protects (lockBoxForBooking), then lets the
 * rules decide. Two requests for one slot queue on the box row; the second sees the first.
 */
async function evaluate(
	tx: Transaction,
	userId: number,
	input: BookingInput,
	now: Date,
	gates: Awaited<ReturnType<typeof readGates>>,
	ignoreBookingId = 0
) {
	const near = await lockBoxForBooking(tx, {
		boxId: input.boxId,
		userId,
		start: input.start,
		end: input.end,
		quota: quotaSpan(input.start, input.end, config.facilityTz),
		ignoreBookingId
	});
	if (!near)
		throw new ServiceError(404, 'The box was not found.', { fields: { boxId: 'No such box.' } });
	const { box, others, outages, userBookings } = near;
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
			certifications: gates.certs,
			others,
			outages,
			userBookings
		}
	);
	return { box, result };
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
		const { box, result } = await evaluate(tx, actor.id, input, now, gates);
		const status = refusalStatus(result);
		if (status) throw refusal(result.reasons, status);

		const values = {
			boxId: box.id,
			userId: actor.id,
			groupId,
			startAt: input.start,
			endAt: input.end,
			// The end of the hold the rules checked, purge included: stored, never worked out again.
			blockedUntil: result.blockedUntil,
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
		if (!openStatuses.includes(booking.status)) {
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
