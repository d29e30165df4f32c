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
	options: RunOptions = {}
): Promise<ActionFailure<FormAnswer & { details?: unknown }> | ({ form?: string } & R)> {
	const answer = await answerForm(request, schema, call, options);
	return answer as Exclude<typeof answer, ConfirmAnswer>;
}

type RunOptions = FormShape & {
	form?: string;
	/** For a form with structure of its own (repeated rows): its reading, echoed back. */
	read?: (form: FormData) => Record<string, unknown>;
};

/** What a destructive action will do, in words, before it is done. */
export type Ask = {
	/** The question: "Cancel this booking?" */
	title: string;
	/** The consequence: "This cancellation will be billed (inside 24 h of the start)." */
	message: string;
	/** What it touches, one line each: "Ada Lovelace, Tue 3 Mar, 09:00–11:00". */
	details?: string[];
	/** The button that goes ahead: "Yes, cancel it". */
	yes: string;
};

/** The confirmation step's answer: the consequence, and the fields to post again. */
export type Confirmation = Required<Ask> & {
	/** The action to post to ("?/cancel"; "" for a page's default action). */
	action: string;
	/** The form's fields as posted, repeats kept, in order; never a password or `confirmed`. */
	fields: [name: string, value: string][];
};

export type ConfirmAnswer = {
	form?: string;
	values: Record<string, string>;
	confirm: Confirmation;
};

/** The field a confirmation step posts: present and "yes" means the person said yes. */
export const CONFIRMED_FIELD = 'confirmed';

/**
 * runForm with a confirmation step, for actions that destroy or cancel something. Unless
 * the form carries `confirmed=yes`, the input is read and checked as usual, then `ask`
 * says what the action would do, and the answer is `{ form, values, confirm }` with
 * nothing changed: the page shows the consequence and a button that posts the same fields
 * again with `confirmed=yes`. `ask` answering null (nothing to confirm: an outage that
 * cancels no booking, or a request the service will refuse anyway) goes straight on, and
 * a refusal it throws answers like the service's own, so a step is never offered for an
 * action that cannot happen. Works without JavaScript: it is all in the form post.
 */
export async function runConfirmedForm<S extends z.ZodType, R extends object | void>(
	request: Request,
	schema: S,
	ask: (input: z.output<S>, form: FormData) => Promise<Ask | null> | Ask | null,
	call: (input: z.output<S>, form: FormData) => Promise<R>,
	options: RunOptions = {}
): Promise<
	ActionFailure<FormAnswer & { details?: unknown }> | ({ form?: string } & R) | ConfirmAnswer
> {
	return answerForm(request, schema, call, options, ask);
}

async function answerForm<S extends z.ZodType, R extends object | void>(
	request: Request,
	schema: S,
	call: (input: z.output<S>, form: FormData) => Promise<R>,
	options: RunOptions,
	ask?: (input: z.output<S>, form: FormData) => Promise<Ask | null> | Ask | null
): Promise<
	ActionFailure<FormAnswer & { details?: unknown }> | ({ form?: string } & R) | ConfirmAnswer
> {
	const form = await request.formData();
	const confirmed = ask ? form.get(CONFIRMED_FIELD) === 'yes' : false;
	// The step's own field is not the schema's (strict schemas refuse unknown fields).
	if (ask) form.delete(CONFIRMED_FIELD);
	const input = options.read ? options.read(form) : formInput(form, options);
	// A form with structure of its own gets its reading back, which its component reads.
	const values = (options.read ? input : formValues(form)) as Record<string, string>;
	const named = options.form ? { form: options.form } : {};
	const parsed = schema.safeParse(input);
	if (!parsed.success)
		return fail(400, {
			...named,
			values,
			errors: fieldErrors(parsed.error),
			message: 'Please correct the fields marked below.'
		});
	if (ask && !confirmed) {
		const question = await attempt(async () => ask(parsed.data, form));
		if (!question.ok) return refusedForm(values, question.error, options.form);
		if (question.value)
			return {
				...named,
				values,
				confirm: {
					...question.value,
					details: question.value.details ?? [],
					action: actionOf(request),
					fields: [...form.entries()].flatMap(([name, value]): [string, string][] =>
						typeof value === 'string' && !/password/i.test(name) ? [[name, value]] : []
					)
				}
			};
	}
	const result = await attempt(() => call(parsed.data, form));
	if (!result.ok) return refusedForm(values, result.error, options.form);
	return { ...named, ...(result.value ?? {}) } as { form?: string } & R;
}

/** The named action a form was posted to ("?/cancel"), or "" for the default action. */
function actionOf(request: Request): string {
	const search = new URL(request.url).search;
	const name = /^\?\/([\w-]+)/.exec(search)?.[1];
	return name ? `?/${name}` : '';
}

/**
 * A record id posted in a form. Anything but a positive whole number becomes 0, which no
 * record has, so the service answers "not found" instead of sending NaN to the database.
 */
export function formId(value: FormDataEntryValue | null | undefined): number {
	const n = typeof value === 'string' && /^\d{1,10}$/.test(value.trim()) ? Number(value) : 0;
	return Number.isSafeInteger(n) ? n : 0;
}
