// One way to read a form and answer it. A form's fields become the input its API route's
// zod schema reads (checkboxes, numbers, repeated fields, dates on the facility clock); the
// runner parses, calls the service, and answers with the form's values, a message per field
// and a message for the form, so every action answers the same way.
import { fail, type ActionFailure } from '@sveltejs/kit';
import type { z } from 'zod';
import { fromLocal } from '$lib/domain/time';
import { fieldErrors } from '$lib/validation/fields';
import { config } from './config';
import { attempt, type ServiceError } from './services/errors';

export type FormShape = {
	/** Checkboxes: present means true, absent false. */
	booleans?: readonly string[];
	/** Fields that may repeat (several checkboxes of one name): always an array. */
	arrays?: readonly string[];
	/**
	 * Instants entered as a date and a time field on the facility's clock: the key is the
	 * schema's field, the value its two form fields. An instant that does not exist on that
	 * clock (the hour skipped in spring) becomes an invalid marker the schema refuses.
	 */
	instants?: Readonly<Record<string, readonly [date: string, time: string]>>;
	/** Fields to leave out (an id the route reads itself, a file). */
	omit?: readonly string[];
};

/**
 * A form's fields in the shape its schema reads. Empty text fields are left out, so an
 * optional field is simply absent; text is passed as typed and the schema coerces it.
 */
export function formInput(form: FormData, shape: FormShape = {}): Record<string, unknown> {
	const { booleans = [], arrays = [], instants = {}, omit = [] } = shape;
	const parts = new Set(Object.values(instants).flat());
	const input: Record<string, unknown> = {};
	for (const key of new Set(form.keys())) {
		if (booleans.includes(key) || parts.has(key) || omit.includes(key)) continue;
		const texts = form.getAll(key).filter((v): v is string => typeof v === 'string');
		if (arrays.includes(key)) input[key] = texts;
		else if (texts[0] !== undefined && texts[0].trim() !== '') input[key] = texts[0];
	}
	for (const key of arrays) input[key] ??= [];
	for (const key of booleans) input[key] = form.get(key) === 'on' || form.get(key) === 'true';
	for (const [key, [dateKey, timeKey]] of Object.entries(instants)) {
		const date = String(form.get(dateKey) ?? '');
		const time = String(form.get(timeKey) ?? '');
		if (!date && !time) continue;
		// An ISO string the schema's date-time check accepts, or text it refuses.
		input[key] = fromLocal(date, time, config.facilityTz)?.toISOString() ?? `${date} ${time}`;
	}
	return input;
}

/** The form's own fields as typed, to put back into it after a refusal; never a password. */
export function formValues(form: FormData): Record<string, string> {
	const values: Record<string, string> = {};
	for (const [key, value] of form.entries())
		if (typeof value === 'string' && !/password/i.test(key)) values[key] = value;
	return values;
}

export type FormAnswer = {
	form?: string;
	values: Record<string, string>;
	errors: Record<string, string>;
	message: string;
};

/** A form action's answer to a refusal from a service, its field messages included. */
export function refusedForm(
	values: Record<string, string>,
	error: ServiceError,
	form?: string
): ActionFailure<FormAnswer & { details?: unknown }> {
	const details = error.details as { fields?: Record<string, string> } | undefined;
	return fail(error.status, {
		...(form ? { form } : {}),
		values,
		errors: details?.fields ?? {},
		message: error.message,
		details: error.details
	});
}

/**
 * Runs a form action: reads the form through `schema` (as its API route does), calls the
 * service, and answers `{ form, ...result }` or a failure with the values, a message per
 * field and one for the form. Errors that are not a ServiceError (a redirect, a bug) pass.
 */
export async function runForm<S extends z.ZodType, R extends object | void>(
	request: Request,
	schema: S,
	call: (input: z.output<S>, form: FormData) => Promise<R>,
	options: FormShape & {
		form?: string;
		/** For a form with structure of its own (repeated rows): its reading, echoed back. */
		read?: (form: FormData) => Record<string, unknown>;
	} = {}
): Promise<ActionFailure<FormAnswer & { details?: unknown }> | ({ form?: string } & R)> {
	const form = await request.formData();
	const input = options.read ? options.read(form) : formInput(form, options);
	// A form with structure of its own gets its reading back, which its component reads.
	const values = (options.read ? input : formValues(form)) as Record<string, string>;
	const parsed = schema.safeParse(input);
	if (!parsed.success)
		return fail(400, {
			...(options.form ? { form: options.form } : {}),
			values,
			errors: fieldErrors(parsed.error),
			message: 'Please correct the fields marked below.'
		});
	const result = await attempt(() => call(parsed.data, form));
	if (!result.ok) return refusedForm(values, result.error, options.form);
	return { ...(options.form ? { form: options.form } : {}), ...(result.value ?? {}) } as {
		form?: string;
	} & R;
}

/**
 * A record id posted in a form. Anything but a positive whole number becomes 0, which no
 * record has, so the service answers "not found" instead of sending NaN to the database.
 */
export function formId(value: FormDataEntryValue | null | undefined): number {
	const n = typeof value === 'string' && /^\d{1,10}$/.test(value.trim()) ? Number(value) : 0;
	return Number.isSafeInteger(n) ? n : 0;
}
