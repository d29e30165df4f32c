import { fail } from '@sveltejs/kit';
import type { z } from 'zod';
import { fieldErrors } from '$lib/validation/fields';
import type { ServiceError } from './services/errors';

/** A form action's answer to bad input: the values back, a message per field. */
export function invalidForm<V>(values: V, error: z.ZodError) {
	return fail(400, {
		values,
		errors: fieldErrors(error),
		message: 'Please correct the fields marked below.'
	});
}

/** A form action's answer to a refusal from a service. */
export function refusedForm<V>(values: V, error: ServiceError) {
	const details = error.details as { fields?: Record<string, string> } | undefined;
	return fail(error.status, { values, errors: details?.fields ?? {}, message: error.message });
}

/**
 * A record id posted in a form. Anything but a positive whole number becomes 0, which no
 * record has, so the service answers "not found" instead of sending NaN to the database.
 */
export function formId(value: FormDataEntryValue | null | undefined): number {
	const n = typeof value === 'string' && /^\d{1,10}$/.test(value.trim()) ? Number(value) : 0;
	return Number.isSafeInteger(n) ? n : 0;
}
