import { codeFor, errorResponse, fail } from './http';
import { attempt } from './errors';

/** Runs a service call for an API route; a ServiceError becomes the contract's error. */
export async function serve<T>(call: () => Promise<T>): Promise<T> {
	const result = await attempt(call);
	if (!result.ok) {
		const { status, message, details, code } = result.error;
		fail(status, message, details, code ?? codeFor(status));
	}
	return result.value;
}

/**
 * Runs a service call for an API route and answers it: `ok` with its value, or a refusal
 * (ServiceError) as the contract's error, built once (the API error hook passes it on as it
 * is, http.ts shapeApiError). For the routes everybody hits at once (POST /api/bookings).
 */
export async function respond<T>(
	call: () => Promise<T>,
	ok: (value: T) => Response
): Promise<Response> {
	const result = await attempt(call);
	if (result.ok) return ok(result.value);
	const { status, message, details, code } = result.error;
	return errorResponse(status, message, code ?? codeFor(status), details);
}
