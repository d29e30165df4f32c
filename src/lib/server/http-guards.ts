// What every response carries and how large a request body may be. The Content-Security-
// Policy itself comes from SvelteKit (`kit.csp` in svelte.config.js: a nonce on its own
// inline scripts); the headers below go on pages, API answers and files alike.
//
// Bodies: adapter-node's BODY_SIZE_LIMIT is one cap for every route, set for the largest
// upload. `bodyLimits` runs before anything reads a body and gives each route its own cap: a
// small default (BODY_LIMIT_DEFAULT, 64 kB) for JSON and forms, the upload's own cap plus room
// for the form around it on the few routes that take a file. A declared Content-Length above
// the cap is refused before a byte is read; a body sent without one (chunked) is counted as
// it is read and refused once it passes the cap. Either way the answer is a 413: the
// contract's error shape on the API, the form's own answer for an enhanced form, a short
// page otherwise. What the client still sends after the refusal is read and thrown away (up
// to DRAIN_LIMIT_BYTES, then the connection is closed): a client still uploading when the
// answer comes, as a browser does, would otherwise see a reset connection instead of the 413.
import { error, json, type Handle, type RequestEvent } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { MAX_DOCUMENT_BYTES } from '../domain/documents';
import { MAX_CSV_BYTES } from '../domain/readings-csv';
import { config } from './config';
import { errorResponse } from './http';
import { MAX_PHOTO_BYTES } from './storage';

/** Room in a multipart body for the boundaries and the fields around the file. */
export const FORM_OVERHEAD_BYTES = 64 * 1024;

const MB = 1024 * 1024;

export type BodyCap = {
	/** Bytes the body may have. */
	bytes: number;
	/** Said to the person (and as the field's message when `field` is set). */
	message: string;
	/** The form field the refusal belongs to. */
	field?: string;
	/** The name the page's action answers with (`runForm`'s `form` option), if any. */
	form?: string;
};

type UploadRoute = BodyCap & {
	path: RegExp;
	/** A page's named action (`?/report`); the route's other actions keep the default. */
	action?: string;
};

/** The routes that take a file, each with its upload's own cap and the form around it. */
export const uploadRoutes: UploadRoute[] = [
	{
		// A sensor log: the body itself (text/csv) or the `file` of a form.
		path: /^\/api\/boxes\/\d+\/readings\/import$/,
		bytes: MAX_CSV_BYTES + FORM_OVERHEAD_BYTES,
		message: `The file is larger than ${MAX_CSV_BYTES / MB} MB; split the log and upload the parts.`,
		field: 'file'
	},
	{
		path: /^\/api\/documents$/,
		bytes: MAX_DOCUMENT_BYTES + FORM_OVERHEAD_BYTES,
		message: `The document is larger than ${MAX_DOCUMENT_BYTES / MB} MB.`,
		field: 'file'
	},
	{
		path: /^\/boxes\/\d+\/ports\/\d+\/damage$/,
		action: 'report',
		bytes: MAX_PHOTO_BYTES + FORM_OVERHEAD_BYTES,
		message: `The photo is larger than ${MAX_PHOTO_BYTES / MB} MB.`,
		field: 'photo'
	},
	{
		path: /^\/boxes\/\d+\/here$/,
		action: 'damage',
		bytes: MAX_PHOTO_BYTES + FORM_OVERHEAD_BYTES,
		message: `The photo is larger than ${MAX_PHOTO_BYTES / MB} MB.`,
		field: 'photo',
		form: 'damage'
	}
];

/** The action a form posts to: "report" for `?/report`, "default" for none. */
function actionOf(url: URL): string {
	return /^\?\/([\w-]+)/.exec(url.search)?.[1] ?? 'default';
}

/** The cap on `url`'s request body: its upload's, or the default for JSON and forms. */
export function bodyCapFor(url: URL, defaultBytes = config.bodyLimitDefault): BodyCap {
	const route = uploadRoutes.find(
		(r) => r.path.test(url.pathname) && (r.action === undefined || r.action === actionOf(url))
	);
	if (route)
		return { bytes: route.bytes, message: route.message, field: route.field, form: route.form };
	return {
		bytes: defaultBytes,
		message: `The request is larger than ${Math.round(defaultBytes / 1024)} kB.`
	};
}

/** Paths that answer in the contract's error shape (as `hooks.server.ts` reads them). */
const isApi = (path: string) =>
	path.startsWith('/api/') || path.startsWith('/ical/') || path.startsWith('/documents/');

/**
 * A value in the format SvelteKit's enhanced forms read an action's answer in (devalue's
 * flat array: the root first, every value by its index). Only strings and plain objects of
 * them, which is all a refusal holds.
 */
export function actionData(value: Record<string, unknown>): string {
	const values: unknown[] = [];
	const add = (v: unknown): number => {
		const index = values.length;
		if (typeof v === 'string') {
			values.push(v);
			return index;
		}
		const slots: Record<string, number> = {};
		values.push(slots);
		for (const [k, inner] of Object.entries(v as Record<string, unknown>)) slots[k] = add(inner);
		return index;
	};
	add(value);
	return JSON.stringify(values);
}

const escapeHtml = (s: string) => s.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);

/** The 413 for `event`, in the kind of answer its client reads. */
export function tooLarge(event: RequestEvent, cap: BodyCap): Response {
	const fields = cap.field ? { fields: { [cap.field]: cap.message } } : undefined;
	let response: Response;
	if (isApi(event.url.pathname)) {
		response = errorResponse(413, cap.message, 'too_large', fields);
	} else if (
		event.request.headers.get('x-sveltekit-action') === 'true' ||
		(event.request.headers.get('accept') ?? '').startsWith('application/json')
	) {
		// An enhanced form: the action's own kind of refusal, shown on the form.
		const data = {
			...(cap.form ? { form: cap.form } : {}),
			values: {},
			errors: cap.field ? { [cap.field]: cap.message } : {},
			message: cap.message
		};
		response = json({ type: 'failure', status: 413, data: actionData(data) }, { status: 413 });
	} else {
		const message = escapeHtml(cap.message);
		response = new Response(
			`<!doctype html><html lang="en"><head><meta charset="utf-8">` +
				`<meta name="viewport" content="width=device-width, initial-scale=1">` +
				`<title>Too large</title></head><body><h1>Too large</h1><p>${message}</p>` +
				`<p><a href="${escapeHtml(event.url.pathname)}">Back to the form</a></p></body></html>`,
			{
				status: 413,
				headers: {
					'content-type': 'text/html; charset=utf-8',
					// Not rendered by SvelteKit, so it carries its own policy: nothing to load.
					'content-security-policy': "default-src 'none'; frame-ancestors 'none'"
				}
			}
		);
	}
	return response;
}

/** A refused body is thrown away up to this much; past it the connection is closed. */
export const DRAIN_LIMIT_BYTES = 32 * MB;

/**
 * Reads what is left of a refused body and keeps none of it, so that the client, still
 * sending, gets to read the answer. Past `limit` bytes the stream is cancelled, which has
 * adapter-node close the connection. Never throws (a client that goes away ends it).
 */
export async function discard(body: ReadableStream<Uint8Array>, limit = DRAIN_LIMIT_BYTES) {
	let seen = 0;
	try {
		const reader = body.getReader();
		for (;;) {
			const { done, value } = await reader.read();
			if (done) return;
			seen += value.byteLength;
			if (seen > limit) return await reader.cancel('The body is too large.');
		}
	} catch {
		// Already ended by adapter-node's own limit, or the client went away.
	}
}

/** The error a counted body ends with past its cap; routes that catch a 413 see one. */
function bodyTooLargeError(cap: BodyCap): unknown {
	try {
		error(413, { code: 'too_large', message: cap.message });
	} catch (e) {
		return e;
	}
}

/**
 * `source` read through a count that errors the stream once more than `cap.bytes` have
 * passed. The rest of the source is then discarded, not cancelled: with adapter-node a
 * cancel destroys the connection before the 413 can be sent.
 */
export function countedBody(source: ReadableStream<Uint8Array>, cap: BodyCap) {
	const reader = source.getReader();
	let seen = 0;
	let exceeded = false;
	const stream = new ReadableStream<Uint8Array>({
		async pull(controller) {
			const { done, value } = await reader.read();
			if (done) return controller.close();
			seen += value.byteLength;
			if (seen > cap.bytes) {
				exceeded = true;
				reader.releaseLock();
				void discard(source);
				return controller.error(bodyTooLargeError(cap));
			}
			controller.enqueue(value);
		},
		cancel(reason) {
			return reader.cancel(reason);
		}
	});
	return {
		stream,
		get exceeded() {
			return exceeded;
		}
	};
}

/** Each route's cap on its request body (see the top of this file). */
export const bodyLimits: Handle = async ({ event, resolve }) => {
	const { request } = event;
	if (request.body === null) return resolve(event);
	const cap = bodyCapFor(event.url);
	const declared = request.headers.get('content-length')?.trim();
	if (declared && /^\d+$/.test(declared)) {
		// adapter-node ends a body that runs past its declared length, so the length is the cap.
		if (Number(declared) <= cap.bytes) return resolve(event);
		void discard(request.body);
		return tooLarge(event, cap);
	}
	const counted = countedBody(request.body, cap);
	event.request = new Request(request.url, {
		method: request.method,
		headers: request.headers,
		body: counted.stream,
		signal: request.signal,
		duplex: 'half'
	} as RequestInit & { duplex: 'half' });
	const response = await resolve(event);
	// Whatever the route made of a body cut short (a 400, a 500), the answer is the 413.
	return counted.exceeded ? tooLarge(event, cap) : response;
};

/**
 * Headers every response carries unless its route set its own. The policy for scripts,
 * styles and framing is `kit.csp`'s; these cover what a CSP does not and older browsers.
 */
export const securityHeaderValues: Record<string, string> = {
	'x-content-type-options': 'nosniff',
	'referrer-policy': 'same-origin',
	// Browsers without CSP's frame-ancestors.
	'x-frame-options': 'DENY',
	// The damage photo is a file input (the camera app, not this page, takes it).
	'permissions-policy': 'camera=(), microphone=(), geolocation=()'
};

/** The cache rule for what a signed-in person is shown (their pages, their API answers). */
export const PRIVATE_NO_STORE = 'private, no-store';

function withHeaders(response: Response, headers: Record<string, string>): Response {
	const missing = Object.entries(headers).filter(([k]) => !response.headers.has(k));
	if (!missing.length) return response;
	try {
		for (const [k, v] of missing) response.headers.set(k, v);
		return response;
	} catch {
		// A response with immutable headers (one fetched, Response.redirect): copied.
		const copy = new Response(response.body, response);
		for (const [k, v] of missing) copy.headers.set(k, v);
		return copy;
	}
}

/**
 * The headers above on every response, and `Cache-Control: private, no-store` on whatever
 * is answered to a signed-in person or sets a cookie, unless the route chose its own caching
 * (calendar feeds, statements, files keep theirs). Static assets never pass through here.
 */
export const securityHeaders: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	const personal = Boolean(event.locals.user) || response.headers.getSetCookie().length > 0;
	return withHeaders(
		response,
		personal ? { ...securityHeaderValues, 'cache-control': PRIVATE_NO_STORE } : securityHeaderValues
	);
};

/** Both, headers outermost so that a refused body's 413 carries them too. */
export const httpGuards: Handle = sequence(securityHeaders, bodyLimits);
