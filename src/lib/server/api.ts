import { codeFor, fail } from './http';
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
