import { fail } from './http';

/**
 * A route's id as a number. Routes take ids through the `id` matcher (src/params/id.ts), so
 * a path with anything else never reaches them; the check here only guards a route that
 * was given an id some other way.
 */
export function idParam(value: string, what = 'That record'): number {
	const id = Number(value);
	if (!Number.isSafeInteger(id) || id <= 0) fail(404, `${what} was not found.`);
	return id;
}
