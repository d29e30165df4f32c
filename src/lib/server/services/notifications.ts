import { and, desc, eq, inArray, isNull, sql } from 'drizzle-orm';
import { db, type Transaction } from '../db';
import { notifications, outbox, users } from '../db/schema';
import { staffNotice } from '../mail/messages';
import { enqueueMany } from '../mail/outbox';
import { transaction } from '../db/transaction';

export async function unreadCount(userId: number): Promise<number> {
	const [row] = await db
		.select({ n: sql<number>`count(*)` })
		.from(notifications)
		.where(and(eq(notifications.userId, userId), isNull(notifications.readAt)));
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

/** The outbox for managers: newest first, optionally one status. */
export async function outboxPage(status?: 'pending' | 'sending' | 'sent' | 'failed', limit = 100) {
	return db
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
		.where(status ? eq(outbox.status, status) : undefined)
		.orderBy(desc(outbox.id))
		.limit(limit);
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
