import { and, eq, gt, inArray, isNull, lt, ne } from 'drizzle-orm';
import { openStatuses } from '$lib/domain/bookings';
import { findAlternatives, type Alternative } from '$lib/domain/alternatives';
import { config } from '../config';
import type { Database } from '../db/connect';
import { db, type Transaction } from '../db';
import { startsFrom } from '../db/queries';
import { bookings, boxes, boxRequiredModules, certifications, outages } from '../db/schema';

const WINDOW_DAYS = 7;

/**
 * Loads, once, what finding alternatives for many people needs: every box in service,
 * what each requires, what is busy on it in the next week, and the people's certifications.
 * Reading inside the caller's transaction sees the outage just made and the bookings it
 * just cancelled.
 */
export async function alternativeFinder(
	tx: Database | Transaction,
	userIds: number[],
	now = new Date()
) {
	const until = new Date(now.getTime() + WINDOW_DAYS * 86_400_000);
	const [boxRows, required, busyBookings, busyOutages, certs] = await Promise.all([
		tx
			.select({ id: boxes.id, name: boxes.name, slotStepMin: boxes.slotStepMin })
			.from(boxes)
			.where(and(eq(boxes.status, 'in_service'), ne(boxes.atmosphereState, 'alarm'))),
		tx.select().from(boxRequiredModules),
		tx
			.select({ boxId: bookings.boxId, start: bookings.startAt, end: bookings.blockedUntil })
			.from(bookings)
			.where(
				and(
					inArray(bookings.status, openStatuses),
					startsFrom(now),
					lt(bookings.startAt, until),
					gt(bookings.blockedUntil, now)
				)
			),
		tx
			.select({ boxId: outages.boxId, start: outages.startAt, end: outages.endAt })
			.from(outages)
			.where(and(lt(outages.startAt, until), gt(outages.endAt, now))),
		userIds.length
			? tx
					.select({
						userId: certifications.userId,
						moduleId: certifications.moduleId,
						expiresAt: certifications.expiresAt
					})
					.from(certifications)
					.where(
						and(
							inArray(certifications.userId, userIds),
							isNull(certifications.revokedAt),
							gt(certifications.expiresAt, now)
						)
					)
			: Promise.resolve([])
	]);
	const busy = [...busyBookings, ...busyOutages];

	// One person with several cancelled bookings of one length gets the same offers: compute once.
	const memo = new Map<string, Alternative[]>();
	/** Up to three slots of `lengthMin` for the user: the same box first, then others they may use. */
	return function alternativesFor(
		userId: number,
		lengthMin: number,
		sameBoxId: number
	): Alternative[] {
		const key = `${userId}:${lengthMin}:${sameBoxId}`;
		const known = memo.get(key);
		if (known) return known;
		const held = new Set(
			certs.filter((c) => c.userId === userId && c.expiresAt > until).map((c) => c.moduleId)
		);
		const usable = boxRows.filter((b) =>
			required.filter((r) => r.boxId === b.id).every((r) => held.has(r.moduleId))
		);
		usable.sort((a, b) =>
			a.id === sameBoxId ? -1 : b.id === sameBoxId ? 1 : a.name.localeCompare(b.name)
		);
		const offers = findAlternatives({
			lengthMin,
			from: now,
			until,
			stepMin: Math.max(15, ...usable.map((b) => b.slotStepMin)),
			tz: config.facilityTz,
			candidates: usable.map((b) => ({
				boxId: b.id,
				boxName: b.name,
				busy: busy.filter((x) => x.boxId === b.id)
			}))
		});
		memo.set(key, offers);
		return offers;
	};
}

/**
 * Fresh offers for the user's bookings an outage cancelled in the last week, checked again
 * when one is taken.
 */
export async function rebookOffers(
	userId: number,
	cancelled: { id: number; boxId: number; boxName: string; startAt: Date; endAt: Date }[],
	now = new Date()
) {
	if (!cancelled.length) return [];
	const alternativesFor = await alternativeFinder(db, [userId], now);
	return cancelled.map((b) => ({
		bookingId: b.id,
		boxName: b.boxName,
		startAt: b.startAt,
		endAt: b.endAt,
		offers: alternativesFor(
			userId,
			Math.round((b.endAt.getTime() - b.startAt.getTime()) / 60_000),
			b.boxId
		)
	}));
}
