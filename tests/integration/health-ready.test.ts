// Liveness and readiness: /api/health answers while the app and its database do;
// /api/health/ready also weighs the outbox, the scheduler and the database's round trip,
// and answers 503 (naming what is out of bounds) when mail has been stuck for too long.
import { afterAll, describe, expect, it } from 'vitest';
import { randomBytes } from 'node:crypto';
import { rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { eq } from 'drizzle-orm';
import { outbox } from '../../src/lib/server/db/schema';
import { closeTestDb, makeUser, testDb } from '../support/db';
import { Client } from '../support/http';
import { until } from '../support/until';

afterAll(closeTestDb);

type Check = { ok: boolean } & Record<string, unknown>;
type Ready = {
	ok: boolean;
	failed: string[];
	checks: {
		database: Check & { roundTripMs: number; limitMs: number };
		outbox: Check & {
			pending: number;
			sending: number;
			failed: number;
			oldestPendingSeconds: number;
			limitSeconds: number;
		};
		scheduler: Check & {
			on: boolean;
			lastRunAt: string | null;
			secondsSinceLastRun: number;
			limitSeconds: number;
		};
	};
	error?: { code: string; message: string; details: { failed: string[] } };
};

const client = new Client();

async function ready() {
	const r = await client.get('/api/health/ready');
	return { status: r.status, body: (await r.json()) as Ready };
}

const sinkDir = () => {
	const dir = process.env.MAIL_SINK_DIR;
	if (!dir) throw new Error('MAIL_SINK_DIR is not set; run `npm test`.');
	return dir;
};

/** A message for a fresh person, straight into the outbox. */
async function queued(values: Partial<typeof outbox.$inferInsert>) {
	const to = await makeUser('member');
	const [row] = await testDb()
		.insert(outbox)
		.values({
			recipientId: to.id,
			toAddress: to.email,
			kind: 'staff_notice',
			subject: 'Readiness check',
			textBody: 'x',
			htmlBody: '<p>x</p>',
			dedupeKey: `test:ready:${randomBytes(6).toString('hex')}`,
			...values
		})
		.$returningId();
	return row.id;
}

const outboxRow = async (id: number) =>
	(await testDb().select().from(outbox).where(eq(outbox.id, id)))[0];

describe('GET /api/health', () => {
	it('stays a cheap liveness check', async () => {
		const r = await client.get('/api/health');
		expect(r.status).toBe(200);
		expect(await r.json()).toEqual({ ok: true });
	});
});

describe('GET /api/health/ready', () => {
	it('reports the database round trip, the outbox and the scheduler with their bounds', async () => {
		// A message failed for good is counted, but does not make the process unready.
		const failedId = await queued({
			status: 'failed',
			attempts: 8,
			lastError: '550 mailbox unavailable',
			nextAttemptAt: new Date(Date.now() + 86_400_000)
		});
		try {
			const { status, body } = await ready();
			expect(body.failed, JSON.stringify(body)).toEqual([]);
			expect(status).toBe(200);
			expect(body.ok).toBe(true);
			expect(body.error).toBeUndefined();

			const { database, outbox: mail, scheduler } = body.checks;
			expect(database.ok).toBe(true);
			expect(database.roundTripMs).toBeGreaterThanOrEqual(0);
			expect(database.roundTripMs).toBeLessThanOrEqual(database.limitMs);
			expect(database.limitMs).toBe(1000);

			expect(mail.ok).toBe(true);
			expect(mail.failed).toBeGreaterThanOrEqual(1);
			expect(mail.limitSeconds).toBe(600);
			expect(mail.oldestPendingSeconds).toBeLessThanOrEqual(mail.limitSeconds);
			for (const n of [mail.pending, mail.sending, mail.failed])
				expect(Number.isInteger(n)).toBe(true);

			// The test app runs the scheduler (scripts/test.mjs); it has finished a round.
			expect(scheduler).toMatchObject({ ok: true, on: true });
			expect(new Date(scheduler.lastRunAt!).getTime()).toBeGreaterThan(Date.now() - 60_000);
			expect(scheduler.secondsSinceLastRun).toBeLessThanOrEqual(scheduler.limitSeconds);
		} finally {
			await testDb().delete(outbox).where(eq(outbox.id, failedId));
		}
	});

	it('goes 503 naming the outbox when the mail server has been down too long, and recovers', async () => {
		const pauseFile = join(sinkDir(), 'paused');
		// The sink answers 421 from now on: the mail server is down.
		writeFileSync(pauseFile, 'paused by health-ready.test.ts');
		let id: number | undefined;
		try {
			// A message queued 20 minutes ago (the bound is 10) that is due now.
			id = await queued({
				createdAt: new Date(Date.now() - 20 * 60_000),
				nextAttemptAt: new Date()
			});
			// The app's worker tries, the sink refuses: the message waits for its next try.
			await until(async () => {
				const row = await outboxRow(id!);
				return row.attempts >= 1 && !!row.lastError && row.status !== 'sent';
			});

			const { status, body } = await ready();
			expect(status).toBe(503);
			expect(body.ok).toBe(false);
			expect(body.failed).toContain('outbox');
			// The same body also carries the contract's error shape, naming the failed check.
			expect(body.error).toMatchObject({
				code: 'not_ready',
				details: { failed: expect.arrayContaining(['outbox']) }
			});
			expect(body.error!.message).toContain('outbox');
			expect(body.checks.outbox.ok).toBe(false);
			expect(body.checks.outbox.oldestPendingSeconds).toBeGreaterThan(
				body.checks.outbox.limitSeconds
			);
			expect(body.checks.outbox.pending + body.checks.outbox.sending).toBeGreaterThanOrEqual(1);
			expect(body.checks.database.ok).toBe(true);

			// Liveness is not readiness: the process still answers.
			expect((await client.get('/api/health')).status).toBe(200);

			// The mail server is back: the message leaves, and the process is ready again.
			rmSync(pauseFile);
			await until(async () => (await outboxRow(id!)).status === 'sent');
			await until(async () => (await ready()).status === 200);
			const after = await ready();
			expect(after.body.failed).not.toContain('outbox');
		} finally {
			rmSync(pauseFile, { force: true });
			if (id) await testDb().delete(outbox).where(eq(outbox.id, id));
		}
	});
});
