import { describe, expect, it, vi } from 'vitest';
import type { RequestEvent } from '@sveltejs/kit';
import {
	currentRequestId,
	logRequestError,
	logger,
	makeLogger,
	metricsAccess,
	observe,
	redactPath,
	registry,
	requestIdFrom,
	requestLine,
	withRequestId
} from './observability';

const uuid = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/;

/** A logger whose JSON lines land in an array. */
function capture() {
	const lines: Record<string, unknown>[] = [];
	const raw: string[] = [];
	const log = makeLogger('info', {
		write(chunk: string) {
			raw.push(chunk);
			lines.push(JSON.parse(chunk));
		}
	});
	return { log, lines, raw };
}

describe('requestIdFrom', () => {
	it('keeps a well-formed incoming id', () => {
		expect(requestIdFrom('lb-7f3a9c21')).toBe('lb-7f3a9c21');
		expect(requestIdFrom('  0b8f1e4e-3f0c-4c1e-9a7b-2d5e6f708192 ')).toBe(
			'0b8f1e4e-3f0c-4c1e-9a7b-2d5e6f708192'
		);
	});

	it('replaces a missing, short, long or strange one with a new UUID', () => {
		for (const bad of [
			null,
			undefined,
			'',
			'short',
			'x'.repeat(37),
			'has space in it',
			'line\n{"level":"fatal"}',
			'-starts-with-dash'
		]) {
			const id = requestIdFrom(bad);
			expect(id).toMatch(uuid);
		}
		expect(requestIdFrom(null)).not.toBe(requestIdFrom(null));
	});
});

describe('redactPath', () => {
	it('hides feed, reset and invitation tokens and leaves other paths alone', () => {
		expect(redactPath('/ical/users/AbC123_-xyz.ics')).toBe('/ical/users/[token]');
		expect(redactPath('/reset/s3cr3t-token')).toBe('/reset/[token]');
		expect(redactPath('/invite/s3cr3t-token/accept')).toBe('/invite/[token]/accept');
		expect(redactPath('/boxes/3/here')).toBe('/boxes/3/here');
		expect(redactPath('/ical/boxes/3.ics')).toBe('/ical/boxes/3.ics');
	});
});

describe('requestLine', () => {
	it('names the route, never the token, and drops an unknown method and a missing user', () => {
		const line = requestLine({
			method: 'PROPFIND',
			routeId: '/reset/[token]',
			path: '/reset/s3cr3t-token',
			status: 200,
			durationMs: 12.345,
			requestId: 'req-12345678',
			userId: null
		});
		expect(line).toEqual({
			requestId: 'req-12345678',
			method: 'OTHER',
			route: '/reset/[token]',
			path: '/reset/[token]',
			status: 200,
			durationMs: 12.3
		});
	});

	it('carries the user id when someone is signed in', () => {
		const line = requestLine({
			method: 'POST',
			routeId: '/api/bookings',
			path: '/api/bookings',
			status: 201,
			durationMs: 40,
			requestId: 'req-12345678',
			userId: 42
		});
		expect(line).toMatchObject({ method: 'POST', route: '/api/bookings', userId: 42 });
	});
});

describe('makeLogger', () => {
	it('writes one JSON line with a level name, a time and the message', () => {
		const { log, lines } = capture();
		log.info({ requestId: 'req-12345678' }, 'request');
		expect(lines).toHaveLength(1);
		expect(lines[0]).toMatchObject({ level: 'info', msg: 'request', requestId: 'req-12345678' });
		expect(new Date(lines[0].time as string).getTime()).not.toBeNaN();
	});

	it('never writes passwords, tokens, cookies or the Authorization header', () => {
		const { log, raw } = capture();
		log.warn(
			{
				password: 'hunter2-top',
				body: { password: 'body-pass-1', currentPassword: 'old-pass-2', newPassword: 'new-3' },
				headers: { cookie: 'bw_session=cookie-secret', authorization: 'Bearer bearer-secret' },
				req: { headers: { cookie: 'deep-cookie', 'set-cookie': 'set-secret' } },
				feed: { token: 'feed-secret' }
			},
			'something odd'
		);
		const text = raw.join('');
		for (const secret of [
			'hunter2-top',
			'body-pass-1',
			'old-pass-2',
			'new-3',
			'cookie-secret',
			'bearer-secret',
			'deep-cookie',
			'set-secret',
			'feed-secret'
		])
			expect(text).not.toContain(secret);
		expect(text).toContain('[redacted]');
	});

	it('logs a failed query without its values, and a driver error without its SQL', () => {
		const { log, raw } = capture();
		const link = 'http://localhost:3000/reset/kjYgufzRy2do6F-jQC5ogX46Ncbak';
		const driver = Object.assign(new Error("Unknown column 'request_id' in 'field list'"), {
			code: 'ER_BAD_FIELD_ERROR',
			errno: 1054,
			sql: "insert into `outbox` values ('Choose a new password: " + link + "')"
		});
		const failed = new Error(
			`Failed query: insert into \`outbox\` (\`text_body\`) values (?)\nparams: Hello,\nChoose a new password here: ${link}\n`,
			{ cause: driver }
		);
		log.error({ err: failed, requestId: 'req-12345678' }, 'request failed');
		const text = raw.join('');
		expect(text).not.toContain('kjYgufzRy2do6F');
		expect(text).not.toContain('Choose a new password');
		const line = JSON.parse(text);
		expect(line.err.message).toBe(
			'Failed query: insert into `outbox` (`text_body`) values (?)\nparams: [redacted]'
		);
		expect(line.err.stack).toContain('params: [redacted]');
		expect(line.err.cause).toMatchObject({
			message: "Unknown column 'request_id' in 'field list'",
			code: 'ER_BAD_FIELD_ERROR',
			errno: 1054
		});
		expect(line.err.cause.sql).toBeUndefined();
	});

	it('stays quiet below its level', () => {
		const lines: string[] = [];
		const log = makeLogger('warn', { write: (s: string) => void lines.push(s) });
		log.info('not shown');
		log.warn('shown');
		expect(lines).toHaveLength(1);
	});
});

describe('the request context', () => {
	it('carries the request id across awaits, and nothing outside a request', async () => {
		expect(currentRequestId()).toBeNull();
		const seen = await withRequestId('req-abcdefgh', async () => {
			await new Promise((r) => setTimeout(r, 1));
			return currentRequestId();
		});
		expect(seen).toBe('req-abcdefgh');
		expect(currentRequestId()).toBeNull();
	});
});

describe('observe', () => {
	function event(url: string, routeId: string | null, headers: Record<string, string> = {}) {
		return {
			request: new Request(url, { headers }),
			url: new URL(url),
			route: { id: routeId },
			locals: { user: null }
		} as unknown as RequestEvent;
	}

	it('echoes the id, runs the request inside it, and logs one line without secrets', async () => {
		const info = vi.spyOn(logger, 'info').mockImplementation(() => undefined);
		const e = event('http://app.test/reset/s3cr3t-token?password=hunter2', '/reset/[token]', {
			'x-request-id': 'req-12345678'
		});
		let inside: string | null = null;
		const response = await observe({
			event: e,
			resolve: async () => {
				inside = currentRequestId();
				return new Response('ok', { status: 200 });
			}
		});
		expect(inside).toBe('req-12345678');
		expect(e.locals.requestId).toBe('req-12345678');
		expect(response.headers.get('x-request-id')).toBe('req-12345678');
		expect(info).toHaveBeenCalledTimes(1);
		const logged = JSON.stringify(info.mock.calls[0]);
		expect(logged).not.toContain('s3cr3t-token');
		expect(logged).not.toContain('hunter2');
		expect(info.mock.calls[0][0]).toMatchObject({
			requestId: 'req-12345678',
			route: '/reset/[token]',
			status: 200
		});
		info.mockRestore();

		const metrics = await registry.metrics();
		expect(metrics).toMatch(
			/boxwright_http_requests_total\{[^}]*route="\/reset\/\[token\]"[^}]*\} \d+/
		);
		expect(metrics).not.toContain('s3cr3t-token');
	});

	it('sets the header on a response whose headers are immutable', async () => {
		const info = vi.spyOn(logger, 'info').mockImplementation(() => undefined);
		const response = await observe({
			event: event('http://app.test/nowhere', null),
			resolve: async () => Response.redirect('http://app.test/', 303)
		});
		expect(response.status).toBe(303);
		expect(response.headers.get('x-request-id')).toMatch(uuid);
		info.mockRestore();
	});
});

describe('logRequestError', () => {
	it('reports the error with the request id, the route and the path without its token', () => {
		const error = vi.spyOn(logger, 'error').mockImplementation(() => undefined);
		const failure = new Error('boom');
		logRequestError(
			failure,
			{
				request: new Request('http://app.test/invite/s3cr3t-token?x=1', { method: 'POST' }),
				url: new URL('http://app.test/invite/s3cr3t-token?x=1'),
				route: { id: '/invite/[token]' },
				locals: { requestId: 'req-12345678' }
			} as unknown as RequestEvent,
			500
		);
		expect(error).toHaveBeenCalledTimes(1);
		expect(error.mock.calls[0][0]).toEqual({
			requestId: 'req-12345678',
			method: 'POST',
			route: '/invite/[token]',
			path: '/invite/[token]',
			status: 500,
			err: failure
		});
		error.mockRestore();
	});
});

describe('metricsAccess', () => {
	const token = 'a-long-metrics-token-1234';
	it('hides the endpoint without a token setting', () => {
		expect(metricsAccess(null, `Bearer ${token}`)).toBe('hidden');
	});
	it('refuses a missing, malformed or wrong token', () => {
		expect(metricsAccess(token, null)).toBe('refused');
		expect(metricsAccess(token, token)).toBe('refused');
		expect(metricsAccess(token, 'Basic abc')).toBe('refused');
		expect(metricsAccess(token, `Bearer ${token}x`)).toBe('refused');
	});
	it('lets the right bearer token through', () => {
		expect(metricsAccess(token, `Bearer ${token}`)).toBe('ok');
		expect(metricsAccess(token, `bearer ${token}`)).toBe('ok');
	});
});
