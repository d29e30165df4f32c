// Expected refusals, below every layer that uses them: db/ and services/ throw a
// ServiceError, the HTTP layer (api.ts, forms.ts, hooks) answers it. Nothing here knows
// about HTTP beyond the status number; the error code of the API contract is picked in
// http.ts (`codeFor`) unless a refusal names its own.
export class ServiceError extends Error {
	constructor(
		readonly status: number,
		message: string,
		readonly details?: unknown,
		/** A code of the API contract more precise than the status's own (`month_not_over`). */
		readonly code?: string
	) {
		// A refusal is an answer, not a fault: nobody reads its stack, and capturing one cost
		// about 40 µs for each refused booking (bench:booking's profile), so none is taken.
		const limit = Error.stackTraceLimit;
		Error.stackTraceLimit = 0;
		super(message);
		Error.stackTraceLimit = limit;
	}
}

export const notFound = (what: string) => new ServiceError(404, `${what} was not found.`);
export const forbidden = (message = 'You may not do that.') => new ServiceError(403, message);

export type Attempt<T> = { ok: true; value: T } | { ok: false; error: ServiceError };

/** Runs a service call; a ServiceError comes back as a value, anything else is rethrown. */
export async function attempt<T>(call: () => Promise<T>): Promise<Attempt<T>> {
	try {
		return { ok: true, value: await call() };
	} catch (e) {
		if (e instanceof ServiceError) return { ok: false, error: e };
		throw e;
	}
}

/** MariaDB's duplicate-key error, from a unique index. */
export function isDuplicateKey(e: unknown): boolean {
	const err = e as { code?: string; cause?: { code?: string } };
	return err?.code === 'ER_DUP_ENTRY' || err?.cause?.code === 'ER_DUP_ENTRY';
}
