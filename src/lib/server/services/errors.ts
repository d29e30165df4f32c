import { codeFor } from '../http';

/** An expected refusal from a service: routes turn it into the error shape or a form message. */
export class ServiceError extends Error {
	constructor(
		readonly status: number,
		message: string,
		readonly details?: unknown,
		readonly code = codeFor(status)
	) {
		super(message);
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
