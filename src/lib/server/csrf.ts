// Cross-site request forgery: SvelteKit's own origin check answers a cross-site form post
// with a plain-text 403 before any hook runs, so an API client could not read its refusal in
// the contract's shape. svelte.config.js switches that check off (`trustedOrigins: ['*']`)
// and this handle does the same check first thing, answering in the contract's shape on the
// API and with a short page elsewhere. As SvelteKit's: only unsafe methods, and not in
// development (`vite dev`); the built app (`npm start`, `npm test`) always checks.
//
// A request is refused when a browser says it comes from another origin (the Origin header
// is set and differs), whatever its type, or when it is a form post (the content types a
// page on another site can send without asking: urlencoded, multipart, text/plain) with no
// Origin at all. A JSON client without an Origin header (a script, curl) goes through:
// browsers always send Origin on these methods, and a page on another site cannot send
// JSON with the person's cookies without a CORS preflight the app never grants.
import type { Handle } from '@sveltejs/kit';
import { dev } from '$app/environment';
import { errorResponse } from './http';

const safeMethods = new Set(['GET', 'HEAD', 'OPTIONS']);

/** What a page on another site can post without a preflight (and SvelteKit's own binary form). */
const formTypes = new Set([
	'application/x-www-form-urlencoded',
	'multipart/form-data',
	'text/plain',
	'application/x-sveltekit-formdata'
]);

/** Paths that answer in the contract's JSON error shape (as hooks.server.ts's `isApi`). */
const answersJson = (path: string) =>
	path.startsWith('/api/') || path.startsWith('/ical/') || path.startsWith('/documents/');

export const CSRF_MESSAGE = 'Cross-site form submissions are refused. Use the form on this site.';

/** Whether the request is a cross-site one to refuse, judged from its method and headers. */
export function isCrossSite(request: Request, origin: string): boolean {
	if (safeMethods.has(request.method)) return false;
	const from = request.headers.get('origin');
	if (from !== null) return from !== origin;
	const type = (request.headers.get('content-type') ?? '').split(';', 1)[0].trim().toLowerCase();
	return formTypes.has(type);
}

/** The refusal: the contract's error on the API, a short page elsewhere. */
export function csrfRefusal(path: string): Response {
	if (answersJson(path)) return errorResponse(403, CSRF_MESSAGE, 'csrf');
	return new Response(
		'<!doctype html><html lang="en"><head><meta charset="utf-8"><title>Refused</title></head>' +
			`<body><h1>Refused</h1><p>${CSRF_MESSAGE}</p><p><a href="/">Boxwright</a></p></body></html>`,
		{ status: 403, headers: { 'content-type': 'text/html; charset=utf-8' } }
	);
}

export const csrf: Handle = ({ event, resolve }) => {
	if (!dev && isCrossSite(event.request, event.url.origin)) return csrfRefusal(event.url.pathname);
	return resolve(event);
};
