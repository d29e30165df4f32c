// Calendar feeds (RFC 5545) of a person's bookings and of a box's schedule.
import { createHash, randomBytes } from 'node:crypto';
import { and, asc, eq, gt, lt } from 'drizzle-orm';
import ical, { ICalEventStatus } from 'ical-generator';
import { DateTime } from 'luxon';
import { tzlib_get_ical_block } from 'timezones-ical-library';
import { outageKindLabel } from '$lib/domain/bookings';
import { config } from '../config';
import { db } from '../db';
import { startsFrom } from '../db/queries';
import { bookings, boxes, outages, users } from '../db/schema';
import { bookingUid } from '../ical';
import { audit } from './audit';
import { transaction } from '../db/transaction';

/** 32 random bytes (256 bits) as base64url: 43 characters. */
const TOKEN_PATTERN = /^[A-Za-z0-9_-]{43}$/;

const hashToken = (token: string) => createHash('sha256').update(token).digest('hex');

export function looksLikeToken(token: string): boolean {
	return TOKEN_PATTERN.test(token);
}

/** A new feed secret for the user; the old one stops working at once. Only the hash is kept. */
export async function newFeedToken(userId: number): Promise<string> {
	const token = randomBytes(32).toString('base64url');
	await transaction(async (tx) => {
		await tx
			.update(users)
			.set({ feedTokenHash: hashToken(token), feedTokenCreatedAt: new Date() })
			.where(eq(users.id, userId));
		await audit(tx, {
			actorId: userId,
			action: 'feed_token.created',
			entity: 'user',
			entityId: userId
		});
	});
	return token;
}

export async function feedTokenCreatedAt(userId: number): Promise<Date | null> {
	const [row] = await db
		.select({ at: users.feedTokenCreatedAt })
		.from(users)
		.where(eq(users.id, userId));
	return row?.at ?? null;
}

/** The active user a token belongs to, or null: unknown, revoked and suspended look the same. */
export async function userForToken(token: string) {
	if (!looksLikeToken(token)) return null;
	const [row] = await db
		.select({ id: users.id, name: users.name, status: users.status })
		.from(users)
		.where(eq(users.feedTokenHash, hashToken(token)));
	return row && row.status === 'active' ? row : null;
}

export function feedUrls(origin: string, token: string) {
	const https = `${origin.replace(/\/$/, '')}/ical/users/${token}.ics`;
	return { https, webcal: https.replace(/^https?:/, 'webcal:') };
}

type FeedEvent = {
	uid: string;
	sequence: number;
	start: Date;
	end: Date;
	summary: string;
	description?: string;
	location?: string;
	cancelled: boolean;
	updatedAt: Date;
};

/** A feed's validators, known from the rows alone; the body is rendered only when sent. */
export type Feed = { lastModified: Date; etag: string; render: () => string };

/** Builds a calendar in the facility zone, with its VTIMEZONE and refresh hints. */
export function renderFeed(name: string, events: FeedEvent[], tz = config.facilityTz): string {
	const calendar = ical({
		name,
		prodId: { company: 'Boxwright', product: 'Boxwright', language: 'EN' },
		ttl: 15 * 60
	});
	// No calendar-wide zone: with one, ical-generator 10 writes DTSTAMP, CREATED and
	// LAST-MODIFIED as local times without a Z, and RFC 5545 (3.8.7.1-3.8.7.3) wants them in
	// UTC. Each event carries the zone instead (DTSTART/DTEND with TZID), and the generator
	// still adds a VTIMEZONE for every zone the events use. X-WR-TIMEZONE is then ours to
	// write (it lands after the events; clients read it anywhere); the non-standard
	// TIMEZONE-ID goes.
	calendar.timezone({ name: null, generator: (zone) => tzlib_get_ical_block(zone)[0] });
	calendar.x('X-WR-TIMEZONE', tz);
	for (const e of events) {
		calendar.createEvent({
			id: e.uid,
			sequence: e.sequence,
			start: DateTime.fromJSDate(e.start).setZone(tz),
			end: DateTime.fromJSDate(e.end).setZone(tz),
			timezone: tz,
			stamp: e.updatedAt,
			lastModified: e.updatedAt,
			summary: e.summary,
			description: e.description ?? null,
			location: e.location ?? null,
			status: e.cancelled ? ICalEventStatus.CANCELLED : ICalEventStatus.CONFIRMED
		});
	}
	return calendar.toString();
}

/**
 * The ETag hashes what the body is made of (each event's UID, SEQUENCE, status, times,
 * texts and last change, plus the window's day), so a 304 costs a query and no rendering.
 */
function finish(name: string, events: FeedEvent[], now: Date): Feed {
	const lastModified = new Date(Math.max(0, ...events.map((e) => e.updatedAt.getTime())));
	lastModified.setMilliseconds(0);
	const hash = createHash('sha256').update(
		`${name}|${config.facilityTz}|${now.toISOString().slice(0, 10)}`
	);
	for (const e of events) {
		hash.update(
			`|${e.uid}:${e.sequence}:${e.cancelled}:${e.start.getTime()}:${e.end.getTime()}:${e.updatedAt.getTime()}`
		);
		// The texts too: renaming a box or a person changes the feed, not the booking row.
		hash.update(`\u0000${e.summary}\u0000${e.location ?? ''}\u0000${e.description ?? ''}`);
	}
	const etag = `"${hash.digest('base64url').slice(0, 27)}"`;
	return { lastModified, etag, render: () => renderFeed(name, events) };
}

/** A person's bookings from 30 days back to a year ahead, cancelled ones included. */
export async function userFeed(userId: number, now = new Date()): Promise<Feed> {
	const from = new Date(now.getTime() - 30 * 86_400_000);
	const to = new Date(now.getTime() + 366 * 86_400_000);
	const rows = await db
		.select({
			id: bookings.id,
			startAt: bookings.startAt,
			endAt: bookings.endAt,
			purpose: bookings.purpose,
			status: bookings.status,
			sequence: bookings.sequence,
			cancelReason: bookings.cancelReason,
			updatedAt: bookings.updatedAt,
			boxName: boxes.name,
			room: boxes.room
		})
		.from(bookings)
		.innerJoin(boxes, eq(boxes.id, bookings.boxId))
		.where(
			and(
				eq(bookings.userId, userId),
				startsFrom(from),
				lt(bookings.startAt, to),
				gt(bookings.endAt, from)
			)
		)
		.orderBy(asc(bookings.startAt));
	const events: FeedEvent[] = rows.map((b) => ({
		uid: bookingUid(b.id),
		sequence: b.sequence,
		start: b.startAt,
		end: b.endAt,
		summary: `${b.boxName}: ${b.purpose}`,
		location: `${b.boxName}, room ${b.room}`,
		description:
			b.status === 'cancelled'
				? `Cancelled: ${b.cancelReason ?? ''}`
				: b.status === 'pending'
					? 'Waiting for a manager’s approval.'
					: undefined,
		cancelled: b.status === 'cancelled',
		updatedAt: b.updatedAt
	}));
	return finish('Boxwright: my box time', events, now);
}

/** Every booking (booker's name only) and outage on a box, 30 days back to a year ahead. */
export async function boxFeed(boxId: number, now = new Date()): Promise<Feed | null> {
	const [box] = await db
		.select({ id: boxes.id, name: boxes.name, room: boxes.room })
		.from(boxes)
		.where(eq(boxes.id, boxId));
	if (!box) return null;
	const from = new Date(now.getTime() - 30 * 86_400_000);
	const to = new Date(now.getTime() + 366 * 86_400_000);
	const [rows, outageRows] = await Promise.all([
		db
			.select({
				id: bookings.id,
				startAt: bookings.startAt,
				endAt: bookings.endAt,
				status: bookings.status,
				sequence: bookings.sequence,
				updatedAt: bookings.updatedAt,
				name: users.name
			})
			.from(bookings)
			.innerJoin(users, eq(users.id, bookings.userId))
			.where(
				and(
					eq(bookings.boxId, boxId),
					startsFrom(from),
					lt(bookings.startAt, to),
					gt(bookings.endAt, from)
				)
			)
			.orderBy(asc(bookings.startAt)),
		db
			.select()
			.from(outages)
			.where(and(eq(outages.boxId, boxId), lt(outages.startAt, to), gt(outages.endAt, from)))
	]);
	const events: FeedEvent[] = [
		...rows.map((b) => ({
			uid: bookingUid(b.id),
			sequence: b.sequence,
			start: b.startAt,
			end: b.endAt,
			summary: `${box.name}: ${b.name}${b.status === 'pending' ? ' (waiting for approval)' : ''}`,
			location: `${box.name}, room ${box.room}`,
			// Kept as CANCELLED so subscribed calendars drop what they had.
			cancelled: b.status === 'cancelled',
			updatedAt: b.updatedAt
		})),
		...outageRows.map((o) => ({
			uid: `outage-${o.id}@boxwright`,
			sequence: o.sequence,
			start: o.startAt,
			end: o.endAt,
			summary: `${box.name} out of service: ${outageKindLabel[o.kind]}`,
			description: o.reason,
			location: `${box.name}, room ${box.room}`,
			cancelled: false,
			updatedAt: o.updatedAt
		}))
	];
	return finish(`Boxwright: ${box.name}`, events, now);
}
