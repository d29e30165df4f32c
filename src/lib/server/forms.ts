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
