// Drains the outbox. Any number of app processes may run this at once: rows are claimed
// with SELECT … FOR UPDATE SKIP LOCKED and marked 'sending' before the SMTP call, so two
// workers never pick the same row. A crash between the SMTP server's acceptance and the
// 'sent' mark can repeat that one message (at-least-once); its Message-ID stays the same,
// so mail clients drop the repeat.
import nodemailer, { type Transporter } from 'nodemailer';
import { and, eq, inArray, lte, or, sql } from 'drizzle-orm';
import { config } from '../config';
import { db } from '../db';
import { transaction } from '../db/transaction';
import { outbox } from '../db/schema';
import { logger, outboxSends } from '../observability';
import { renderRow } from './render';

export const MAX_ATTEMPTS = config.outboxMaxAttempts;
/** A 'sending' row older than this belonged to a worker that died; it is retried. */
const STALE_CLAIM_MS = 5 * 60_000;

/** Exponential backoff from OUTBOX_BACKOFF_MS (2 s, 4 s, 8 s …), capped at 10 minutes. */
export function backoffMs(attempts: number): number {
	return Math.min(config.outboxBackoffMs * 2 ** Math.max(0, attempts - 1), 10 * 60_000);
}

let transporter: Transporter | undefined;
function transport(): Transporter {
	const url = new URL(config.smtpUrl);
	const secure = url.protocol === 'smtps:';
	transporter ??= nodemailer.createTransport({
		// A few kept-open connections instead of one per message.
		pool: true,
		maxConnections: 4,
		host: url.hostname,
		port: Number(url.port || (secure ? 465 : 587)),
		secure,
		auth: url.username
			? { user: decodeURIComponent(url.username), pass: decodeURIComponent(url.password) }
			: undefined,
		// The local sink speaks plain SMTP on loopback; real servers negotiate TLS.
		ignoreTLS: ['127.0.0.1', 'localhost'].includes(url.hostname),
		connectionTimeout: 5000,
		greetingTimeout: 5000,
		socketTimeout: 10000
	});
	return transporter;
}

async function claim(limit: number) {
	return transaction(async (tx) => {
		const now = new Date();
		const due = await tx
			.select({ id: outbox.id })
			.from(outbox)
			.where(
				or(
					and(eq(outbox.status, 'pending'), lte(outbox.nextAttemptAt, now)),
					and(
						eq(outbox.status, 'sending'),
						lte(outbox.claimedAt, new Date(now.getTime() - STALE_CLAIM_MS))
					)
				)
			)
			.orderBy(outbox.id)
			.limit(limit)
			.for('update', { skipLocked: true });
		if (!due.length) return [];
		const ids = due.map((r) => r.id);
		await tx
			.update(outbox)
			.set({ status: 'sending', claimedAt: now, attempts: sql`${outbox.attempts} + 1` })
			.where(inArray(outbox.id, ids));
		return tx.select().from(outbox).where(inArray(outbox.id, ids));
	});
}

/** Sends what is due; returns how many were sent and how many failed this round. */
export async function drainOnce(limit = 40): Promise<{ sent: number; failed: number }> {
	const rows = await claim(limit);
	const results = await Promise.all(
		rows.map(async (row) => {
			try {
				// Rendered here, not when queued; a row that cannot be is a failed attempt too.
				const body = renderRow(row);
				await transport().sendMail({
					from: config.mailFrom,
					to: row.toAddress,
					subject: row.subject,
					text: body.text,
					html: body.html,
					messageId: `<outbox-${row.id}.${row.dedupeKey.replace(/[^a-zA-Z0-9.-]/g, '-')}@boxwright>`,
					icalEvent: body.ics
						? { method: body.icsMethod ?? 'REQUEST', content: body.ics, filename: 'booking.ics' }
						: undefined
				});
				await db
					.update(outbox)
					.set({ status: 'sent', sentAt: new Date(), lastError: null })
					.where(eq(outbox.id, row.id));
				outboxSends.inc({ result: 'sent' });
				return true;
			} catch (e) {
				const giveUp = row.attempts >= MAX_ATTEMPTS;
				const reason = String((e as Error)?.message ?? e).slice(0, 1000);
				outboxSends.inc({ result: giveUp ? 'gave_up' : 'failed' });
				// The message's id, kind and the request that queued it; never its address or text.
				logger[giveUp ? 'error' : 'warn'](
					{
						outboxId: row.id,
						kind: row.kind,
						attempts: row.attempts,
						requestId: row.requestId,
						reason
					},
					giveUp ? 'mail given up' : 'mail send failed, will retry'
				);
				await db
					.update(outbox)
					.set({
						status: giveUp ? 'failed' : 'pending',
						nextAttemptAt: new Date(Date.now() + backoffMs(row.attempts)),
						lastError: reason
					})
					.where(eq(outbox.id, row.id));
				return false;
			}
		})
	);
	const sent = results.filter(Boolean).length;
	return { sent, failed: results.length - sent };
}

let timer: NodeJS.Timeout | undefined;
let running = false;

/**
 * Polls the outbox every `intervalMs` until stopped; one round at a time per process. The
 * server's `init` hook starts it (hooks.server.ts), unless OUTBOX_WORKER=off.
 */
export function startWorker(intervalMs = config.outboxPollMs) {
	if (timer) return;
	const tick = async () => {
		if (running) return;
		running = true;
		try {
			while ((await drainOnce()).sent > 0) {
				// keep going while there is mail
			}
		} catch (e) {
			logger.error({ err: e }, 'outbox worker round failed');
		} finally {
			running = false;
		}
	};
	timer = setInterval(tick, intervalMs);
	timer.unref();
}

export function stopWorker() {
	if (timer) clearInterval(timer);
	timer = undefined;
	transporter?.close();
	transporter = undefined;
}

/** Managers put a failed message back in the queue. */
export async function retryMessage(id: number) {
	const result = await db
		.update(outbox)
		.set({ status: 'pending', attempts: 0, nextAttemptAt: new Date(), lastError: null })
		.where(and(eq(outbox.id, id), eq(outbox.status, 'failed')));
	return (result[0] as { affectedRows: number }).affectedRows > 0;
}
