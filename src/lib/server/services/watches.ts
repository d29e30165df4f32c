// "Tell me if this frees up": a person watches a taken time on a box; when a booking over it
// is cancelled (or declined, freed as a no-show, or moved away) and the whole time is then
// free, they get one notice, in the app and by e-mail, queued in the transaction that freed it.
import { and, eq, gt, inArray, isNull, lt } from 'drizzle-orm';
import { spanIsFree, type Span } from '$lib/domain/booking-rules';
import { formatRange, toLocalParts } from '$lib/domain/time';
import type { WatchInput } from '$lib/validation/bookings';
import { config } from '../config';
import type { Transaction } from '../db';
import { lockBox } from '../db/locks';
import { holdsWithin } from '../db/queries';
import { bookingWatches, users } from '../db/schema';
import { transaction } from '../db/transaction';
import { staffNotice } from '../mail/messages';
import { enqueueMany } from '../mail/outbox';
import type { Actor } from './accounts';
import { audit } from './audit';
import { ServiceError } from './errors';

export type Watch = typeof bookingWatches.$inferSelect;

/**
 * Starts watching [start, end) on a box for the actor. Under the box lock, like everything
 * that frees time, so a cancellation either sees the watch or the watch sees the time free:
 * a time that is free already is told at once (the same single notice), never missed.
 */
export async function createWatch(
	actor: Actor,
	boxId: number,
	input: WatchInput,
	now = new Date()
): Promise<Watch> {
	if (input.end <= now) {
		const message = 'That time has already passed.';
		throw new ServiceError(400, message, { fields: { end: message } });
	}
	return transaction(async (tx) => {
		await lockBox(tx, boxId);
		const [created] = await tx
			.insert(bookingWatches)
			.values({ userId: actor.id, boxId, startAt: input.start, endAt: input.end })
			.$returningId();
		await audit(tx, {
			actorId: actor.id,
			action: 'watch.created',
			entity: 'booking_watch',
			entityId: created.id,
			details: { boxId, start: input.start.toISOString(), end: input.end.toISOString() }
		});
		await notifyFreedWatches(tx, boxId, { startAt: input.start, endAt: input.end }, now);
		const [watch] = await tx.select().from(bookingWatches).where(eq(bookingWatches.id, created.id));
		return watch;
	});
}

const later = (a: Date, b: Date) => (a > b ? a : b);

/**
 * Called inside a transaction that has just freed `freed` on the box (a cancellation, a
 * no-show, a move): every watch not yet told whose time meets it and is now entirely free
 * (no hold, no outage; the part already past is not asked about) gets its one notice and is
 * marked notified. Takes the box lock (already held by a cancellation; a no-show holds only
 * its booking) before deciding, so no booking can take the time unseen. Returns the ids told.
 */
export async function notifyFreedWatches(
	tx: Transaction,
	boxId: number,
	freed: Span,
	now: Date
): Promise<number[]> {
	const near = and(
		eq(bookingWatches.boxId, boxId),
		isNull(bookingWatches.notifiedAt),
		lt(bookingWatches.startAt, freed.endAt),
		gt(bookingWatches.endAt, freed.startAt),
		gt(bookingWatches.endAt, now)
	);
	// The common case, nobody watching, costs one indexed read and no lock.
	const candidates = await tx.select({ id: bookingWatches.id }).from(bookingWatches).where(near);
	if (!candidates.length) return [];
	const box = await lockBox(tx, boxId);
	// Only the watch rows are locked (MariaDB would lock a joined user's row as well).
	const watches = await tx
		.select()
		.from(bookingWatches)
		.where(
			and(
				near,
				inArray(
					bookingWatches.id,
					candidates.map((c) => c.id)
				)
			)
		)
		.for('update');
	if (!watches.length) return [];
	const from = later(new Date(Math.min(...watches.map((w) => w.startAt.getTime()))), now);
	const to = new Date(Math.max(...watches.map((w) => w.endAt.getTime())));
	const { holds, outages } = await holdsWithin(tx, boxId, from, to);
	const free = watches.filter((w) =>
		spanIsFree({ startAt: later(w.startAt, now), endAt: w.endAt }, holds, outages)
	);
	if (!free.length) return [];
	const ids = free.map((w) => w.id);
	const people = await tx
		.select({ id: users.id, email: users.email })
		.from(users)
		.where(
			inArray(
				users.id,
				free.map((w) => w.userId)
			)
		);
	const emailOf = new Map(people.map((p) => [p.id, p.email]));
	await tx.update(bookingWatches).set({ notifiedAt: now }).where(inArray(bookingWatches.id, ids));
	const tz = config.facilityTz;
	await enqueueMany(
		tx,
		free.map((w) => {
			const when = formatRange(w.startAt, w.endAt, tz);
			const title = `Free now: ${box.name}, ${when}`;
			const body = `The time you asked about on ${box.name} (room ${box.room}), ${when}, is free again. Book it before someone else does.`;
			const link = `/calendar?box=${boxId}&view=week&date=${toLocalParts(w.startAt, tz).date}`;
			return {
				to: { id: w.userId, email: emailOf.get(w.userId) ?? '' },
				message: { ...staffNotice(title, body, link), kind: 'watch_freed' },
				dedupeKey: `watch:${w.id}:freed`,
				inApp: { title, body, link }
			};
		})
	);
	for (const w of free) {
		await audit(tx, {
			actorId: null,
			action: 'watch.notified',
			entity: 'booking_watch',
			entityId: w.id,
			details: { boxId }
		});
	}
	return ids;
}
