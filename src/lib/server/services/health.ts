// What the health checks ask. Liveness (/api/health): the app answers only when its
// database does. Readiness (/api/health/ready): the database's round trip, the outbox's
// backlog and this process's scheduler, each against its bound from config.ready.
import { inArray, sql } from 'drizzle-orm';
import { config } from '../config';
import { db } from '../db';
import { outbox } from '../db/schema';
import { outboxGauges, registry, schedulerState } from '../observability';

/**
 * Resolves once the database answers a query on a table; rejects when it cannot. A table,
 * not a bare `SELECT 1`: a Galera node told to refuse queries (wsrep_reject_queries) still
 * answers the bare one, and only refuses (1047) what reads data.
 */
export async function checkDatabase(): Promise<void> {
	await db.execute(sql`SELECT 1 FROM boxes LIMIT 1`);
}

/** Rejects with 'timed out' after `ms`, so a hung pool still gets an answer. */
function within<T>(ms: number, work: Promise<T>): Promise<T> {
	let timer: NodeJS.Timeout | undefined;
	const late = new Promise<never>((_, reject) => {
		timer = setTimeout(() => reject(new Error('timed out')), ms);
	});
	return Promise.race([work, late]).finally(() => clearTimeout(timer));
}

const checkTimeoutMs = () => Math.max(2 * config.ready.databaseMs, 2000);

/** Messages waiting (pending or being sent), failed for good, and the oldest waiting one. */
export async function outboxSummary(now = new Date()) {
	// Only the states that stay small are counted ('sent' rows are history), through the
	// (status, next_attempt_at) index.
	const rows = await db
		.select({
			status: outbox.status,
			count: sql<number>`count(*)`.mapWith(Number),
			oldest: sql<Date | null>`min(${outbox.createdAt})`.mapWith(outbox.createdAt)
		})
		.from(outbox)
		.where(inArray(outbox.status, ['pending', 'sending', 'failed']))
		.groupBy(outbox.status);
	const of = (s: string) => rows.find((r) => r.status === s);
	const waiting = rows.filter((r) => r.status !== 'failed' && r.oldest);
	const oldest = waiting.length ? Math.min(...waiting.map((r) => r.oldest!.getTime())) : null;
	return {
		pending: of('pending')?.count ?? 0,
		sending: of('sending')?.count ?? 0,
		failed: of('failed')?.count ?? 0,
		oldestPendingSeconds:
			oldest === null ? 0 : Math.max(0, Math.round((now.getTime() - oldest) / 1000))
	};
}

const problem = (e: unknown) =>
	(e as Error)?.message === 'timed out' ? 'timed out' : 'unreachable';

async function databaseCheck() {
	const limitMs = config.ready.databaseMs;
	const started = performance.now();
	try {
		await within(checkTimeoutMs(), checkDatabase());
		const roundTripMs = Math.round((performance.now() - started) * 10) / 10;
		return { ok: roundTripMs <= limitMs, roundTripMs, limitMs };
	} catch (e) {
		return { ok: false, roundTripMs: null, limitMs, error: problem(e) };
	}
}

async function outboxCheck(now: Date) {
	const limitSeconds = config.ready.outboxAgeSeconds;
	try {
		const summary = await within(checkTimeoutMs(), outboxSummary(now));
		return { ok: summary.oldestPendingSeconds <= limitSeconds, ...summary, limitSeconds };
	} catch (e) {
		return { ok: false, limitSeconds, error: problem(e) };
	}
}

/** This process's scheduler: off here (no bound), or its last finished round. */
function schedulerCheck(now: Date) {
	if (!config.scheduler) return { ok: true, on: false };
	const limitSeconds = config.ready.schedulerLateMs / 1000;
	const { startedAt, lastRunAt, failed } = schedulerState();
	// Before its first round, the time since it started counts.
	const since = lastRunAt ?? startedAt;
	const secondsSinceLastRun = since ? (now.getTime() - since.getTime()) / 1000 : null;
	return {
		ok: secondsSinceLastRun !== null && secondsSinceLastRun <= limitSeconds,
		on: true,
		lastRunAt: lastRunAt?.toISOString() ?? null,
		secondsSinceLastRun: secondsSinceLastRun === null ? null : Math.round(secondsSinceLastRun),
		limitSeconds,
		failedJobs: failed
	};
}

/**
 * Readiness: each check with its numbers and bound, `failed` naming those out of bounds.
 * A process whose scheduler never started (SCHEDULER=on but no `init`) is not ready.
 */
export async function readiness(now = new Date()) {
	const [database, outboxState] = await Promise.all([databaseCheck(), outboxCheck(now)]);
	const checks = { database, outbox: outboxState, scheduler: schedulerCheck(now) };
	const failed = Object.entries(checks)
		.filter(([, c]) => !c.ok)
		.map(([name]) => name);
	return { ok: failed.length === 0, failed, checks };
}

/** The Prometheus text of this process, with the outbox gauges read just now. */
export async function metricsText(now = new Date()) {
	try {
		const summary = await within(checkTimeoutMs(), outboxSummary(now));
		for (const status of ['pending', 'sending', 'failed'] as const)
			outboxGauges.messages.set({ status }, summary[status]);
		outboxGauges.oldestPending.set(summary.oldestPendingSeconds);
	} catch {
		// The database is away: no stale numbers (the counts drop out, the age is NaN).
		outboxGauges.messages.reset();
		outboxGauges.oldestPending.set(NaN);
	}
	return { contentType: registry.contentType, body: await registry.metrics() };
}
