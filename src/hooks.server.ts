import type { Handle, HandleServerError, RequestEvent, ServerInit } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { building } from '$app/environment';
import { readSession } from '$lib/server/auth';
import { config } from '$lib/server/config';
import { countStatements } from '$lib/server/count-statements';
import { pool } from '$lib/server/db';
import { shapeApiError } from '$lib/server/http';
import { httpGuards } from '$lib/server/http-guards';
import { csrf } from '$lib/server/csrf';
import { defaultAction } from '$lib/server/default-action';
import { startWorker, stopWorker } from '$lib/server/mail/worker';
import { startScheduler, stopScheduler } from '$lib/server/scheduler';
import { logRequestError, observe } from '$lib/server/observability';

// Paths that answer clients (and links opened outside a page) in the contract's error shape.
const isApi = (path: string) =>
	path.startsWith('/api/') || path.startsWith('/ical/') || path.startsWith('/documents/');

/**
 * Routes that check the session themselves, inside their own first database round trip:
 * POST /api/bookings, whose booking decision reads it under the box lock with everything
 * else (services/booking-decision.ts). Until they do, nobody is signed in.
 */
const checksItsOwnSession = (event: RequestEvent) =>
	event.request.method === 'POST' && event.route.id === '/api/bookings';

const session: Handle = async ({ event, resolve }) => {
	if (checksItsOwnSession(event)) {
		event.locals.user = null;
		event.locals.session = null;
		return resolve(event);
	}
	const { user, session } = await readSession(event.cookies);
	event.locals.user = user;
	event.locals.session = session;
	return resolve(event);
};

/** API routes always answer errors as `{ error: { code, message, details } }` in JSON. */
const apiErrors: Handle = async ({ event, resolve }) => {
	if (!isApi(event.url.pathname)) return resolve(event);
	// SvelteKit picks JSON or an HTML page for errors from the Accept header.
	event.request.headers.set('accept', 'application/json');
	return shapeApiError(await resolve(event));
};

export const handle = sequence(
	observe,
	countStatements,
	httpGuards,
	csrf,
	defaultAction,
	apiErrors,
	session
);

export const handleError: HandleServerError = ({ error, event, status, message }) => {
	if (status === 404) return { message: 'Not found.', code: 'not_found' };
	// With the request's id; token paths (feeds, resets, invitations) are redacted.
	logRequestError(error, event, status);
	return {
		message: status >= 500 ? 'Something went wrong on our side. Please try again.' : message,
		code: status >= 500 ? 'internal' : undefined
	};
};

/**
 * Once per process, before the first request; not while building (the build runs this hook
 * when it prerenders). Importing config above has already refused any bad setting.
 */
export const init: ServerInit = () => {
	if (building) return;
	// Every app process drains the outbox and runs the periodic jobs; OUTBOX_WORKER=off and
	// SCHEDULER=off leave them to other processes.
	if (config.outboxWorker) startWorker();
	if (config.scheduler) startScheduler();
	process.on('sveltekit:shutdown', () => {
		stopWorker();
		stopScheduler();
		void pool.end();
	});
};
