import { and, count, desc, eq, inArray, isNull, sql } from 'drizzle-orm';
import type { ListQuery, ListSpec } from '$lib/domain/listing';
import { db, type Transaction } from '../db';
import { notifications, outbox, outboxStatuses, users } from '../db/schema';
import { staffNotice } from '../mail/messages';
import { enqueueMany } from '../mail/outbox';
import { transaction } from '../db/transaction';
import { matchesWords, orderOf, pageInSql } from '../listing';

/** A person's unread notices as a COUNT query (the shell reads it inside its one statement). */
export const unreadQuery = (userId: number) =>
	db
		.select({ n: sql<number>`count(*)` })
		.from(notifications)
		.where(and(eq(notifications.userId, userId), isNull(notifications.readAt)));

export async function unreadCount(userId: number): Promise<number> {
	const [row] = await unreadQuery(userId);
	return Number(row?.n ?? 0);
}

export async function notificationsOf(userId: number, limit = 50) {
	return db
		.select()
		.from(notifications)
		.where(eq(notifications.userId, userId))
		.orderBy(desc(notifications.id))
		.limit(limit);
}

/** A person's notices pile up: paged in SQL, newest first, all or only the unread. */
export const notificationsList = {
	sorts: ['when'],
	defaultSort: 'when',
	defaultDir: 'desc',
	filters: { show: ['unread'] },
	perPage: 25
} as const satisfies ListSpec;

export type NotificationsQuery = ListQuery<'when', 'show'>;

/** One page of the person's notices, with the total. */
export async function notificationsPage(userId: number, query: NotificationsQuery) {
	const where = and(
		eq(notifications.userId, userId),
		query.filters.show === 'unread' ? isNull(notifications.readAt) : undefined
	);
	return pageInSql(
		query,
		async () => {
			const [row] = await db.select({ n: count() }).from(notifications).where(where);
			return row.n;
		},
		(limit, offset) =>
			db
				.select({
					id: notifications.id,
					title: notifications.title,
					body: notifications.body,
					link: notifications.link,
					createdAt: notifications.createdAt,
					readAt: notifications.readAt
				})
				.from(notifications)
				.where(where)
				.orderBy(...orderOf(query, { when: notifications.id }, notifications.id))
				.limit(limit)
				.offset(offset)
	);
}

export async function markAllRead(userId: number, now = new Date()) {
	await db
		.update(notifications)
		.set({ readAt: now })
		.where(and(eq(notifications.userId, userId), isNull(notifications.readAt)));
}

/** One line for a client that shows a notice as text: its title, then its body. */
export const noticeText = (n: { title: string; body: string }) =>
	n.body ? `${n.title} — ${n.body}` : n.title;

/** The bell's contents for a client: how many are unread and the newest notices. */
export async function notificationFeed(userId: number, limit = 50) {
	const [unread, items] = await Promise.all([unreadCount(userId), notificationsOf(userId, limit)]);
	return {
		unread,
		items: items.map((n) => ({
			id: n.id,
			kind: n.kind,
			title: n.title,
			body: n.body,
			text: noticeText(n),
			link: n.link,
			createdAt: n.createdAt,
			read: n.readAt !== null
		}))
	};
}

/**
 * Marks the given notices read; only the user's own are touched (another's id changes
 * nothing, and says nothing of whether it exists). Returns what is still unread.
 */
export async function markRead(userId: number, ids: number[], now = new Date()) {
	await db
		.update(notifications)
		.set({ readAt: now })
		.where(
			and(
				eq(notifications.userId, userId),
				inArray(notifications.id, ids),
				isNull(notifications.readAt)
			)
		);
	return unreadCount(userId);
}

/** The outbox as managers page through it: newest first, one status, found by words. */
export const outboxList = {
	sorts: ['queued', 'to', 'subject', 'status', 'attempts'],
	defaultSort: 'queued',
	defaultDir: 'desc',
	filters: { status: outboxStatuses },
	perPage: 50
} as const satisfies ListSpec;

/**
 * One page of the outbox with the total: sorted, one status, every word of the search in the
 * recipient's address or the subject.
 */
export async function outboxPage(query: ListQuery<(typeof outboxList.sorts)[number], 'status'>) {
	const where = and(
		query.filters.status
			? eq(outbox.status, query.filters.status as (typeof outboxStatuses)[number])
			: undefined,
		matchesWords(query.q, [outbox.toAddress, outbox.subject])
	);
	return pageInSql(
		query,
		async () => (await db.select({ n: count() }).from(outbox).where(where))[0].n,
		(limit, offset) =>
			db
				.select({
					id: outbox.id,
					toAddress: outbox.toAddress,
					kind: outbox.kind,
					subject: outbox.subject,
					status: outbox.status,
					attempts: outbox.attempts,
					nextAttemptAt: outbox.nextAttemptAt,
					lastError: outbox.lastError,
					createdAt: outbox.createdAt,
					sentAt: outbox.sentAt
				})
				.from(outbox)
				.where(where)
				.orderBy(
					...orderOf(
						query,
						{
							// Ids follow the order messages were queued in, and are indexed.
							queued: outbox.id,
							to: outbox.toAddress,
							subject: outbox.subject,
							status: outbox.status,
							attempts: outbox.attempts
						},
						outbox.id
					)
				)
				.limit(limit)
				.offset(offset)
	);
}

/**
 * Tells every active manager and admin, by e-mail and in the app, once per `dedupe`; inside
 * `tx` when given, so the notice is queued only if what it reports is committed.
 */
export async function notifyManagers(
	title: string,
	body: string,
	link: string,
	dedupe: string,
	tx?: Transaction
) {
	const run = async (t: Transaction) => {
		const staff = await t
			.select({ id: users.id, email: users.email })
			.from(users)
			.where(and(inArray(users.role, ['manager', 'admin']), eq(users.status, 'active')));
		const message = staffNotice(title, body, link);
		await enqueueMany(
			t,
			staff.map((to) => ({
				to,
				message,
				dedupeKey: `${dedupe}:${to.id}`,
				inApp: { title, body, link }
			}))
		);
	};
	await (tx ? run(tx) : transaction(run));
}
