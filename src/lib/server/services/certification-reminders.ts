// Reminders before a certification expires, 30 and 7 days ahead (scheduler.ts runs this).
// Each is sent once: its outbox dedupe key `cert-expiry:<certId>:<days>` is the record that it
// went, checked under the certification's row lock, so several processes send it once.
import { and, eq, gt, inArray, isNull, lte } from 'drizzle-orm';
import { standing } from '$lib/domain/certifications';
import { REMINDER_DAYS, reminderStage, type ReminderStage } from '$lib/domain/training-requests';
import { db } from '../db';
import { certifications, outbox, trainingModules, users } from '../db/schema';
import { enqueue } from '../mail/outbox';
import { certificationExpiring } from '../mail/training-messages';
import { transaction } from '../db/transaction';

const DAY_MS = 86_400_000;

export const reminderKey = (certificationId: number, stage: ReminderStage) =>
	`cert-expiry:${certificationId}:${stage}`;

/**
 * Queues the reminders due at `now` (e-mail and in-app) and returns how many it queued.
 * Only the certification that says where a person stands is reminded: one replaced by a
 * newer live grant (a renewal) is not.
 */
export async function remindExpiringCertifications(now = new Date()): Promise<number> {
	const horizon = new Date(now.getTime() + REMINDER_DAYS[0] * DAY_MS);
	const near = await db
		.select({
			id: certifications.id,
			userId: certifications.userId,
			moduleId: certifications.moduleId
		})
		.from(certifications)
		.innerJoin(users, eq(users.id, certifications.userId))
		.where(
			and(
				isNull(certifications.revokedAt),
				gt(certifications.expiresAt, now),
				lte(certifications.expiresAt, horizon),
				eq(users.status, 'active')
			)
		);
	if (!near.length) return 0;
	const grants = await db
		.select()
		.from(certifications)
		.where(
			and(
				inArray(certifications.userId, [...new Set(near.map((c) => c.userId))]),
				inArray(certifications.moduleId, [...new Set(near.map((c) => c.moduleId))])
			)
		);
	const due = near.flatMap((c) => {
		const stands = standing(
			grants.filter((g) => g.userId === c.userId && g.moduleId === c.moduleId),
			now
		);
		const stage = stands?.id === c.id ? reminderStage(stands.expiresAt, now) : null;
		return stage ? [{ id: c.id, stage, key: reminderKey(c.id, stage) }] : [];
	});
	if (!due.length) return 0;
	const sent = new Set(
		(
			await db
				.select({ key: outbox.dedupeKey })
				.from(outbox)
				.where(
					inArray(
						outbox.dedupeKey,
						due.map((d) => d.key)
					)
				)
		).map((r) => r.key)
	);
	let queued = 0;
	for (const d of due.filter((x) => !sent.has(x.key))) {
		const done = await transaction(async (tx) => {
			// Only the certification's row is locked; a process holding it is sending this one.
			const [locked] = await tx
				.select({ id: certifications.id })
				.from(certifications)
				.where(and(eq(certifications.id, d.id), isNull(certifications.revokedAt)))
				.for('update', { skipLocked: true });
			if (!locked) return false;
			// The transaction's first plain read, so its snapshot starts after the lock was
			// taken: a process that sent it and let go is seen here.
			const [already] = await tx
				.select({ id: outbox.id })
				.from(outbox)
				.where(eq(outbox.dedupeKey, d.key));
			if (already) return false;
			const [cert] = await tx
				.select({
					expiresAt: certifications.expiresAt,
					moduleName: trainingModules.name,
					personId: users.id,
					email: users.email,
					name: users.name
				})
				.from(certifications)
				.innerJoin(users, eq(users.id, certifications.userId))
				.innerJoin(trainingModules, eq(trainingModules.id, certifications.moduleId))
				.where(eq(certifications.id, d.id));
			const told = certificationExpiring({
				to: cert.name,
				module: cert.moduleName,
				expiresAt: cert.expiresAt,
				daysLeft: Math.ceil((cert.expiresAt.getTime() - now.getTime()) / DAY_MS)
			});
			await enqueue(tx, { id: cert.personId, email: cert.email }, told.message, d.key, told.inApp);
			return true;
		});
		if (done) queued++;
	}
	return queued;
}
