// The operator's side of a process: JSON log lines (pino), Prometheus metrics (prom-client)
// and the request id that ties a request's log line, its error reports and the outbox rows
// it queued together. `observe` is the first handle of hooks.server.ts.
import { AsyncLocalStorage } from 'node:async_hooks';
import { createHash, randomUUID, timingSafeEqual } from 'node:crypto';
import type { Handle, RequestEvent } from '@sveltejs/kit';
import pino, { type DestinationStream, type Logger } from 'pino';
import { Counter, Gauge, Histogram, Registry, collectDefaultMetrics } from 'prom-client';
import { building } from '$app/environment';
import { config } from './config';

// ---------------------------------------------------------------------------------------
// Logs

/**
 * What never reaches a log line, wherever it sits in a logged object: passwords, tokens,
 * cookies and the Authorization header (pino's `redact`, by path; one and two levels deep).
 */
const secretKeys = [
	'password',
	'currentPassword',
	'newPassword',
	'passwordHash',
	'token',
	'cookie',
	'cookies',
	'authorization',
	'set-cookie'
];
export const redactPaths = secretKeys.flatMap((k) => {
	const key = /^[a-z]+$/i.test(k) ? k : `["${k}"]`;
	const dot = key.startsWith('[') ? '' : '.';
	return [key, `*${dot}${key}`, `*.*${dot}${key}`];
});

/** Token-bearing links and a failed query's bound values, out of an error's text. */
function scrub(text: string): string {
	return (
		text
			// Drizzle's "Failed query: …\nparams: …" lists the values (an e-mail's body with its
			// reset link, a password hash); the statement itself stays.
			.replace(/\nparams: [\s\S]*?(?=\n\s+at |$)/, '\nparams: [redacted]')
			.replace(/\/(reset|invite)\/[A-Za-z0-9_-]{8,}/g, '/$1/[token]')
			.replace(/\/ical\/users\/[^/\s?#"'<>]+/g, '/ical/users/[token]')
	);
}

/**
 * An error as a log line shows it (pino's `err`): type, message, stack and the driver's
 * codes, its causes likewise; never a failed query's values, nor mysql2's `sql` (the
 * statement with its values spliced in).
 */
export function errorForLog(error: unknown, depth = 0): unknown {
	if (typeof error === 'string') return scrub(error);
	if (!(error instanceof Error)) return error;
	const fields = error as Error & Record<string, unknown>;
	const out: Record<string, unknown> = {
		type: error.constructor?.name ?? error.name,
		message: scrub(error.message)
	};
	for (const key of ['code', 'errno', 'sqlState', 'sqlMessage', 'status']) {
		const value = fields[key];
		if (typeof value === 'string') out[key] = scrub(value);
		else if (typeof value === 'number') out[key] = value;
	}
	if (error.stack) out.stack = scrub(error.stack);
	if (error.cause !== undefined && depth < 3) out.cause = errorForLog(error.cause, depth + 1);
	return out;
}

/** A pino logger writing JSON lines to `destination` (stdout by default). */
export function makeLogger(level: string, destination?: DestinationStream): Logger {
	return pino(
		{
			level,
			base: { app: 'boxwright' },
			timestamp: pino.stdTimeFunctions.isoTime,
			formatters: { level: (label) => ({ level: label }) },
			serializers: { err: errorForLog },
			redact: { paths: redactPaths, censor: '[redacted]' }
		},
		destination
	);
}

// One logger, registry and set of metrics per process, kept across the dev server's reloads
// of this module (so counters survive an edit). Bump SHAPE when what create() returns
// changes, or a reload would keep the old object.
const SHAPE = 3;
type Observability = ReturnType<typeof create>;
const slot = Symbol.for('boxwright.observability');
const store = globalThis as unknown as Record<symbol, Observability | undefined>;

function create() {
	const registry = new Registry();
	// Process metrics (CPU, memory, event loop, GC); not while the build analyses this module.
	if (!building) collectDefaultMetrics({ register: registry });
	const registers = [registry];
	return {
		version: SHAPE,
		// The build's prerendering passes through the hooks too; it logs only what goes wrong.
		logger: makeLogger(building ? 'warn' : config.logLevel),
		registry,
		requests: new Counter({
			name: 'boxwright_http_requests_total',
			help: 'Requests answered, by route id (never the raw path), method and status.',
			labelNames: ['route', 'method', 'status'] as const,
			registers
		}),
		durations: new Histogram({
			name: 'boxwright_http_request_duration_seconds',
			help: 'Time to the response head, by route id, method and status.',
			labelNames: ['route', 'method', 'status'] as const,
			registers
		}),
		bookingDecisions: new Counter({
			name: 'boxwright_booking_decisions_total',
			help: 'New bookings decided: created (code: confirmed or pending) or refused (code: the first reason).',
			labelNames: ['outcome', 'code'] as const,
			registers
		}),
		outboxSends: new Counter({
			name: 'boxwright_outbox_sends_total',
			help: 'Outbox send attempts: sent, failed (retried later) or gave up (failed for good).',
			labelNames: ['result'] as const,
			registers
		}),
		outboxMessages: new Gauge({
			name: 'boxwright_outbox_messages',
			help: 'Messages in the outbox by state, read from the database at each scrape.',
			labelNames: ['status'] as const,
			registers
		}),
		outboxOldestPending: new Gauge({
			name: 'boxwright_outbox_oldest_pending_seconds',
			help: 'Age of the oldest message still waiting to leave (0 when none), at each scrape.',
			registers
		}),
		schedulerLastRun: new Gauge({
			name: 'boxwright_scheduler_last_run_timestamp_seconds',
			help: 'When this process last finished a round of periodic jobs (Unix time).',
			registers
		}),
		/** The scheduler's rounds, in memory: each process reports its own. */
		scheduler: {
			startedAt: null as Date | null,
			lastRunAt: null as Date | null,
			failed: [] as string[]
		}
	};
}

const o: Observability = store[slot]?.version === SHAPE ? store[slot] : (store[slot] = create());

export const logger = o.logger;
export const registry = o.registry;
/** Counted where a booking is created or refused (services/bookings.ts). */
export const bookingDecisions = o.bookingDecisions;
/** Counted by the outbox worker per attempt. */
export const outboxSends = o.outboxSends;
/** Set from the database just before a scrape (services/health.ts `metricsText`). */
export const outboxGauges = { messages: o.outboxMessages, oldestPending: o.outboxOldestPending };

// ---------------------------------------------------------------------------------------
// The scheduler's rounds

const scheduler = o.scheduler;

export function noteSchedulerStart(at = new Date()) {
	scheduler.startedAt = at;
}

/** A round of periodic jobs finished; `failed` names the jobs that threw. */
export function noteSchedulerRun(failed: string[], at = new Date()) {
	scheduler.lastRunAt = at;
	scheduler.failed = failed;
	o.schedulerLastRun.set(at.getTime() / 1000);
}

export function schedulerState() {
	return { ...scheduler, failed: [...scheduler.failed] };
}

// ---------------------------------------------------------------------------------------
// Requests

const requestContext = new AsyncLocalStorage<{ requestId: string }>();

/** The id of the request this code runs for, or null (the worker, the scheduler). */
export function currentRequestId(): string | null {
	return requestContext.getStore()?.requestId ?? null;
}

/** Runs `fn` as part of the request `requestId` (what `observe` does for each request). */
export function withRequestId<T>(requestId: string, fn: () => T): T {
	return requestContext.run({ requestId }, fn);
}

/** An incoming X-Request-Id when it is well formed (8 to 36 of [A-Za-z0-9._-]), else a UUID. */
export function requestIdFrom(header: string | null | undefined): string {
	const id = header?.trim();
	return id && /^[A-Za-z0-9][A-Za-z0-9._-]{7,35}$/.test(id) ? id : randomUUID();
}

/** Path segments that are secrets (feed, reset and invitation tokens), as a path to log. */
export function redactPath(path: string): string {
	return path
		.replace(/^\/ical\/users\/[^/]+/, '/ical/users/[token]')
		.replace(/^\/(reset|invite)\/[^/]+/, '/$1/[token]');
}

const methods = new Set(['GET', 'HEAD', 'POST', 'PUT', 'PATCH', 'DELETE', 'OPTIONS']);

export type RequestFacts = {
	method: string;
	/** SvelteKit's route id (`/api/boxes/[id=id]`), null when no route matched. */
	routeId: string | null;
	/** The URL's path; its query string is never logged. */
	path: string;
	status: number;
	durationMs: number;
	requestId: string;
	userId?: number | null;
};

/** The fields of a request's one log line: no query string, no secret path segment. */
export function requestLine(f: RequestFacts) {
	return {
		requestId: f.requestId,
		method: methods.has(f.method) ? f.method : 'OTHER',
		route: f.routeId ?? null,
		path: redactPath(f.path),
		status: f.status,
		durationMs: Math.round(f.durationMs * 10) / 10,
		...(f.userId ? { userId: f.userId } : {})
	};
}

function record(f: RequestFacts) {
	const line = requestLine(f);
	const labels = { route: line.route ?? 'none', method: line.method, status: String(f.status) };
	o.requests.inc(labels);
	o.durations.observe(labels, f.durationMs / 1000);
	if (f.status >= 500) o.logger.error(line, 'request');
	else o.logger.info(line, 'request');
}

/** The response with X-Request-Id set (a copy when its headers are immutable). */
function withHeader(response: Response, requestId: string): Response {
	try {
		response.headers.set('x-request-id', requestId);
		return response;
	} catch {
		const copy = new Response(response.body, response);
		copy.headers.set('x-request-id', requestId);
		return copy;
	}
}

/**
 * First in the hooks' sequence: gives the request its id (on `event.locals`, in the
 * X-Request-Id response header and in the async context `enqueue` reads), then writes its
 * one log line and counts it by route id.
 */
export const observe: Handle = async ({ event, resolve }) => {
	const requestId = requestIdFrom(event.request.headers.get('x-request-id'));
	event.locals.requestId = requestId;
	const started = performance.now();
	const facts = (status: number): RequestFacts => ({
		method: event.request.method,
		routeId: event.route.id,
		path: event.url.pathname,
		status,
		durationMs: performance.now() - started,
		requestId,
		userId: event.locals.user?.id ?? null
	});
	let response: Response;
	try {
		response = await withRequestId(requestId, () => resolve(event));
	} catch (e) {
		record(facts(500));
		throw e;
	}
	record(facts(response.status));
	return withHeader(response, requestId);
};

/** What handleError logs: the error with the request's id and its path without secrets. */
export function logRequestError(error: unknown, event: RequestEvent, status: number) {
	o.logger.error(
		{
			requestId: event.locals.requestId ?? currentRequestId(),
			method: event.request.method,
			route: event.route.id,
			path: redactPath(event.url.pathname),
			status,
			err: error
		},
		'request failed'
	);
}

// ---------------------------------------------------------------------------------------
// Metrics access

const digest = (s: string) => createHash('sha256').update(s).digest();

/**
 * Whether /metrics may answer: 'hidden' (404) without a METRICS_TOKEN setting, 'refused'
 * (401) without the right `Authorization: Bearer …`, else 'ok'. Compared in constant time.
 */
export function metricsAccess(
	token: string | null,
	authorization: string | null
): 'hidden' | 'refused' | 'ok' {
	if (!token) return 'hidden';
	const given = /^Bearer\s+(\S+)\s*$/i.exec(authorization ?? '')?.[1];
	if (!given) return 'refused';
	return timingSafeEqual(digest(given), digest(token)) ? 'ok' : 'refused';
}
