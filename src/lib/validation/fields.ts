import type { z } from 'zod';

/** One message per field, keyed by the field's dotted path ("" for the whole input). */
export function fieldErrors(err: z.ZodError): Record<string, string> {
	const fields: Record<string, string> = {};
	for (const issue of err.issues) {
		const key = issue.path.join('.');
		fields[key] ??= issue.message;
	}
	return fields;
}
