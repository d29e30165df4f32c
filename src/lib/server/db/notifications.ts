import {
	bigint,
	datetime,
	index,
	int,
	longtext,
	mediumtext,
	mysqlEnum,
	mysqlTable,
	smallint,
	text,
	varchar
} from 'drizzle-orm/mysql-core';
import { sql } from 'drizzle-orm';
import { users } from './users';

export const outboxStatuses = ['pending', 'sending', 'sent', 'failed'] as const;

/**
 * One row per e-mail to send. Written in the same transaction as the change it reports,
 * drained by the worker in src/lib/server/mail/worker.ts.
 */
export const outbox = mysqlTable(
	'outbox',
	{
		id: bigint({ mode: 'number' }).autoincrement().primaryKey(),
		recipientId: int().references(() => users.id, { onDelete: 'set null' }),
		toAddress: varchar({ length: 254 }).notNull(),
		kind: varchar({ length: 40 }).notNull(),
		subject: varchar({ length: 200 }).notNull(),
		/**
		 * The message's body as rendered: only rows queued before messages were rendered at
		 * send time hold it; newer rows hold `template` and `data` instead.
		 */
		textBody: text(),
		htmlBody: mediumtext(),
		/** iCalendar METHOD of the attachment (REQUEST, CANCEL), when there is one. */
		icsMethod: varchar({ length: 10 }),
		icsBody: mediumtext(),
		/** Which message (mail/messages.ts) the worker renders when it sends this row. */
		template: varchar({ length: 40 }),
		/** What the message needs, as JSON (the template's data): rendered by the worker. */
		data: longtext(),
		/** Unique per message meant, so the same change never queues two messages. */
		dedupeKey: varchar({ length: 191 }).notNull().unique(),
		status: mysqlEnum(outboxStatuses).notNull().default('pending'),
		attempts: smallint().notNull().default(0),
		nextAttemptAt: datetime({ mode: 'date', fsp: 3 })
			.notNull()
			.default(sql`CURRENT_TIMESTAMP(3)`),
		claimedAt: datetime({ mode: 'date', fsp: 3 }),
		lastError: varchar({ length: 1000 }),
		createdAt: datetime({ mode: 'date', fsp: 3 })
			.notNull()
			.default(sql`CURRENT_TIMESTAMP(3)`),
		sentAt: datetime({ mode: 'date', fsp: 3 }),
		/** X-Request-Id of the request that queued it (null from the scheduler or a script). */
		requestId: varchar({ length: 36 })
	},
	(t) => [index('outbox_due_idx').on(t.status, t.nextAttemptAt)]
);

/** What the app shows under the bell: one row per message to a user. */
export const notifications = mysqlTable(
	'notifications',
	{
		id: bigint({ mode: 'number' }).autoincrement().primaryKey(),
		userId: int()
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		kind: varchar({ length: 40 }).notNull(),
		title: varchar({ length: 200 }).notNull(),
		body: text().notNull(),
		link: varchar({ length: 300 }),
		createdAt: datetime({ mode: 'date', fsp: 3 })
			.notNull()
			.default(sql`CURRENT_TIMESTAMP(3)`),
		readAt: datetime({ mode: 'date', fsp: 3 })
	},
	(t) => [index('notifications_user_idx').on(t.userId, t.readAt)]
);
