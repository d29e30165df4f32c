import { error, json } from '@sveltejs/kit';
import type { z } from 'zod';
import { fieldErrors } from '$lib/validation/fields';

/** The codes of DESIGN.md's HTTP contract, by status. */
const defaultMessage: Record<number, string> = {
	401: 'Sign in first.',
	403: 'You may not do that.',
	404: 'Not found.',
	405: 'That method is not allowed here.',
	429: 'Too many requests; try again later.'
};

const codeByStatus: Record<number, string> = {
	400: 'invalid_input',
	401: 'unauthenticated',
	403: 'forbidden',
	404: 'not_found',
	405: 'method_not_allowed',
	409: 'conflict',
	413: 'too_large',
	415: 'unsupported_media_type',
	422: 'rule_refused',
	429: 'rate_limited'
};

export function codeFor(status: number): string {
	return codeByStatus[status] ?? (status >= 500 ? 'internal' : 'error');
}

/** Throws the error the client sees as `{ error: { code, message, details } }`. */
export function fail(
	status: number,
	message: string,
	details?: unknown,
	code = codeFor(status)
): never {
	error(status, { code, message, details });
}

/** Answers already in the contract's shape, which shapeApiError passes on untouched. */
const inShape = new WeakSet<Response>();

/** The contract's error as a response (an API route's refusal, or a route outside /api/). */
export function errorResponse(
	status: number,
	message: string,
	code = codeFor(status),
	details?: unknown
): Response {
	const response = json(
		{ error: { code, message, ...(details === undefined ? {} : { details }) } },
		{ status }
	);
	inShape.add(response);
	return response;
}

export function invalidInput(
	fields: Record<string, string>,
	message = 'Some fields are not valid.'
): never {
	fail(400, message, { fields });
}

/** Parses a JSON body against a zod schema; malformed JSON or bad fields give 400. */
export async function readJson<S extends z.ZodType>(
	request: Request,
	schema: S
): Promise<z.output<S>> {
	let body: unknown;
	try {
		body = await request.json();
	} catch {
		fail(400, 'The request body is not valid JSON.', { fields: {} });
	}
	const parsed = schema.safeParse(body);
	if (!parsed.success) invalidInput(fieldErrors(parsed.error));
	return parsed.data;
}

/** Rewrites any error response of an API route into the contract's shape. */
export async function shapeApiError(response: Response): Promise<Response> {
	// A refusal built by errorResponse (api.ts respond) is answered as it is: no copy of the
	// body and no second parse, which every refused booking paid before.
	if (response.status < 400 || inShape.has(response)) return response;
	const type = response.headers.get('content-type') ?? '';
	let body: { code?: string; message?: string; details?: unknown; error?: unknown } = {};
	if (type.includes('application/json'))
		body = await response
			.clone()
			.json()
			.catch(() => ({}));
	if (body.error) return response;
	const headers = new Headers(response.headers);
	headers.delete('content-length');
	const shaped = json(
		{
			error: {
				code: body.code ?? codeFor(response.status),
				message: body.message ?? defaultMessage[response.status] ?? 'The request failed.',
				...(body.details === undefined ? {} : { details: body.details })
			}
		},
		{ status: response.status, headers }
	);
	return shaped;
}
