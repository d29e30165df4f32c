// The booking decision: what POST /api/bookings, the booking form and each week of a series
// run to make one booking. Everybody hits it at once (a popular box's next week opening, a
// lab meeting ending), so it is written for as few round trips as a bare endpoint would make,
// in text SQL on the core pool (db/raw.ts: no query building, no stack capture). Every rule it
// applies is checkBooking's (domain/booking-rules.ts), the same function a move goes through.
//
//   trip 1  first, outside the transaction, the gates, which do not race with other bookings:
//           who books (the request's session, when the route leaves its check to this
//           module), the box's required modules joined to their certifications, their
//           e-mail setting and the group billed; then START TRANSACTION, the box row locked
//           (a certified write, db/locks.ts) and, under the lock, the box's rules and the
//           holds near the request (db/queries.ts NEAR_SQL). A refusal is answered now; its
//           ROLLBACK runs while the answer goes out.
//   trip 2  the booking, its audit entry and its confirmation's outbox row, then COMMIT.
//
// The lock must stay the transaction's first statement. InnoDB fixes a transaction's snapshot
// at its first plain read: a read placed before the lock would leave every later read blind to
// a booking committed while the lock was awaited, and two bookings for one slot could both be
// made. The gates ahead of START TRANSACTION are statements of their own (autocommit), not
// reads of the transaction. On a Galera cluster the lock is a write, so two nodes deciding on
// one box conflict at certification and one decision runs again (db/retry.ts runBatches,
// DB_TX_ATTEMPTS).
//
// Figures behind the shape (bench:booking on this 2-core machine, 20 connections, against a
// bare node:http + mysql2 endpoint doing BEGIN, lock, overlap read, ROLLBACK or INSERT+COMMIT):
// before this module a taken slot ran at 0.20 of bare and a free one at 0.16, over 5 and 8
// sequential trips (the session check, gates on three connections, BEGIN, lock and reads,
// inserts one by one, ROLLBACK or COMMIT), with drizzle's query building 13–19 % of the CPU
// and the confirmation rendered under the lock (12.5 %). Each step and its figure is in
// DEVELOPERS.md ("The booking decision"). One text batch beat the same statements as prepared
// `execute()` calls, so nothing here is prepared; no stored procedure either: two trips is
// what a bare client makes.
import { checkBooking, quotaSpan, refusalStatus } from '$lib/domain/booking-rules';
import type { BookingStatus } from '$lib/domain/bookings';
import type { BookingInput } from '$lib/validation/bookings';
import { config } from '../config';
import { SessionCheck } from '../auth';
import { gates, LOCK_SQL, NEAR_SQL, nearValues, readGates, readNear } from '../db/queries';
import { batchTransaction } from '../db/transaction';
import { bookingConfirmed, icsMethodOf } from '../mail/messages';
import { bookingDecisions, currentRequestId } from '../observability';
import type { Actor } from './accounts';
import { confirmationKey, refusal } from './booking-check';
import { ServiceError } from './errors';

/**
 * Who books, as the session variable @user (NEAR_SQL and the gates read it): a person
 * already known (a form action, a series), or the one whose session the request carries;
 * then this read is the request's session check (SessionCheck, auth.ts), in the decision's
 * first round trip instead of one of its own before it.
 */
const WHO_SQL = {
	actor: 'SET @user = ?',
	session: 'SET @user = (SELECT user_id FROM sessions WHERE id = ?)'
};

const INSERT_BOOKING_SQL = `INSERT INTO bookings (box_id, user_id, group_id, start_at, end_at,
	blocked_until, purpose, chemical_classes, volatile_solvents, status, confirmed_at, series_id)
	VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?);
SET @booking = LAST_INSERT_ID()`;
// The first week of a new series is its own series: its id is only known in the batch.
const FIRST_OF_SERIES_SQL = `UPDATE bookings SET series_id = @booking WHERE id = @booking`;
const AUDIT_SQL = (firstOfSeries: boolean) =>
	`INSERT INTO audit_log (actor_id, action, entity, entity_id, details)
	VALUES (?, 'booking.created', 'booking', @booking, ${firstOfSeries ? `JSON_SET(?, '$.seriesId', @booking)` : '?'})`;
// The outbox row holds what the confirmation needs (mail/messages.ts); the worker renders it.
const CONFIRMATION_SQL = `INSERT IGNORE INTO outbox (recipient_id, to_address, kind, subject,
	template, data, ics_method, dedupe_key, request_id)
	VALUES (?, ?, ?, ?, ?, JSON_SET(?, '$.booking.id', @booking), ?,
		CONCAT(?, @booking, ?), ?)`;
// confirmationKey(@booking, 0), split where SQL puts the id.
const CONFIRMATION_KEY = confirmationKey('\u0000', 0).split('\u0000');

/** Which series a booking joins: none, a new one (this booking's id), or an existing one. */
export type SeriesPlace = null | 'first' | number;

/** Who books: a person already known, or the one whose session the request carries. */
export type Booker = Actor | SessionCheck;

/**
 * Decides one booking and makes it when every rule allows; the booking as stored. Throws
 * the refusal in the contract's shape (401 no session, 400 group, 404 box, 409 overlap,
 * 422 rules), or 503 when the database refused every attempt.
 */
export async function book(
	booker: Booker,
	input: BookingInput,
	now: Date,
	series: SeriesPlace = null
) {
	const tz = config.facilityTz;
	const bySession = booker instanceof SessionCheck;
	const gate = gates(input.boxId, input.groupId, bySession ? booker.sessionId : undefined);
	const made = await batchTransaction(async (tx) => {
		// The gates go ahead of START TRANSACTION in the same round trip: they do not race
		// with other bookings, and read outside the transaction they neither fix its snapshot
		// nor hold the box lock longer (everyone queues on that lock for a popular box).
		const read = await tx.begin(
			[LOCK_SQL, NEAR_SQL].join(';\n'),
			[
				input.boxId,
				...nearValues({
					boxId: input.boxId,
					start: input.start,
					end: input.end,
					quota: quotaSpan(input.start, input.end, tz)
				})
			],
			{
				text: `${bySession ? WHO_SQL.session : WHO_SQL.actor};\n${gate.text}`,
				values: [bySession ? booker.sessionId : booker.id, ...gate.values]
			}
		);
		const { requiredModules, certs, person } = readGates(read.slice(1, 3));
		// The order of refusals: no session (401), a group that is not yours (400, whatever
		// the box), no such box (404), then the rules.
		const actor: Actor | null = bySession ? booker.judge(person) : booker;
		if (!actor || !person) throw new ServiceError(401, 'Sign in first.');
		if (input.groupId !== undefined && !person.in_chosen_group) {
			throw new ServiceError(400, 'You can only bill a booking to a group you are in.', {
				fields: { groupId: 'Choose one of your groups.' }
			});
		}
		const near = readNear(read.slice(4));
		if (!near)
			throw new ServiceError(404, 'The box was not found.', { fields: { boxId: 'No such box.' } });

		const { box } = near;
		const result = checkBooking(input, {
			now,
			tz,
			box: { ...box, requiredModules },
			certifications: certs,
			others: near.others,
			outages: near.outages,
			userBookings: near.userBookings
		});
		const refused = refusalStatus(result);
		if (refused) {
			tx.rollback();
			bookingDecisions.inc({ outcome: 'refused', code: result.reasons[0]?.code ?? 'unknown' });
			throw refusal(result.reasons, refused);
		}

		const status: BookingStatus = box.needsApproval ? 'pending' : 'confirmed';
		const groupId = input.groupId ?? person.default_group;
		const firstOfSeries = series === 'first';
		const booking = {
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
			status,
			confirmedAt: status === 'confirmed' ? now : null,
			seriesId: typeof series === 'number' ? series : null
		};
		const details = {
			boxId: box.id,
			start: input.start.toISOString(),
			end: input.end.toISOString(),
			status
		};
		const statements = [INSERT_BOOKING_SQL];
		const values: unknown[] = [
			booking.boxId,
			booking.userId,
			booking.groupId,
			booking.startAt,
			booking.endAt,
			booking.blockedUntil,
			booking.purpose,
			JSON.stringify(booking.chemicalClasses),
			booking.volatileSolvents,
			booking.status,
			booking.confirmedAt,
			booking.seriesId
		];
		if (firstOfSeries) statements.push(FIRST_OF_SERIES_SQL);
		statements.push(AUDIT_SQL(firstOfSeries));
		values.push(
			actor.id,
			JSON.stringify(booking.seriesId ? { ...details, seriesId: booking.seriesId } : details)
		);
		if (status === 'confirmed' && person.email_confirmations) {
			const message = bookingConfirmed(
				{ id: 0, ...booking, boxName: box.name, room: box.room, sequence: 0 },
				{ name: person.name }
			);
			statements.push(CONFIRMATION_SQL);
			values.push(
				actor.id,
				person.email,
				message.kind,
				message.subject,
				message.template,
				message.data,
				icsMethodOf(message.template),
				...CONFIRMATION_KEY,
				currentRequestId()
			);
		}
		const [inserted] = (await tx.commit(statements.join(';\n'), values)) as [{ insertId: number }];
		const id = inserted.insertId;
		return {
			id,
			...booking,
			seriesId: firstOfSeries ? id : booking.seriesId,
			cancelReason: null,
			cancelCause: null,
			outageId: null
		};
	});
	bookingDecisions.inc({ outcome: 'created', code: made.status });
	return made;
}
