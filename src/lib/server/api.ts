import { fail } from './http';
import { attempt } from './services/errors';

/** Runs a service call for an API route; a ServiceError becomes the contract's error. */
export async function serve<T>(call: () => Promise<T>): Promise<T> {
	const result = await attempt(call);
	if (!result.ok)
		fail(result.error.status, result.error.message, result.error.details, result.error.code);
	return result.value;
}
