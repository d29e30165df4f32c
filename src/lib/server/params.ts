import { fail } from './http';

/** A positive integer id from a route parameter, or 404 (an id that cannot exist). */
export function idParam(value: string, what = 'That record'): number {
	const id = /^\d{1,10}$/.test(value) ? Number(value) : NaN;
	if (!Number.isSafeInteger(id) || id <= 0) fail(404, `${what} was not found.`);
	return id;
}
