import type { Database } from '../db/connect';
import type { Transaction } from '../db';
import { notifications, outbox } from '../db/schema';
import { currentRequestId } from '../observability';
import { icsMethodOf, type Message } from './messages';

type Recipient = { id: number; email: string };

/**
 * Queues an e-mail (and optionally an in-app notification) inside the caller's
 * transaction, so the message exists exactly when the change it reports does.
 * The dedupe key makes a repeat of the same change queue nothing new.
 */
export async function enqueue(
	tx: Database | Transaction,
	to: Recipient,
	message: Message,
	dedupeKey: string,
	inApp?: { title: string; body: string; link?: string }
) {
	await enqueueMany(tx, [{ to, message, dedupeKey, inApp }]);
}

export type Outgoing = {
	to: Recipient;
	message: Message;
	dedupeKey: string;
	inApp?: { title: string; body: string; link?: string };
};

/** Many messages in two multi-row inserts (an outage over a thousand bookings). */
export async function enqueueMany(tx: Database | Transaction, items: Outgoing[]) {
	// The request this runs for (observability.ts sets it per request), so a message can be
	// traced back to the request's log line.
	const requestId = currentRequestId();
	for (let i = 0; i < items.length; i += 500) {
		const chunk = items.slice(i, i + 500);
		await tx
			.insert(outbox)
			.ignore()
			.values(
				chunk.map(({ to, message, dedupeKey }) => ({
					recipientId: to.id,
					toAddress: to.email,
					kind: message.kind,
					subject: message.subject,
					// The worker renders the bodies from these when it sends (mail/render.ts).
					template: message.template,
					data: message.data,
					icsMethod: icsMethodOf(message.template),
					dedupeKey,
					requestId
				}))
			);
		const notices = chunk.filter((c) => c.inApp);
		if (notices.length) {
			await tx.insert(notifications).values(
				notices.map(({ to, message, inApp }) => ({
					userId: to.id,
					kind: message.kind,
					title: inApp!.title,
					body: inApp!.body,
					link: inApp!.link ?? null
				}))
			);
		}
	}
}
