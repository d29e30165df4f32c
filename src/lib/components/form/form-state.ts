// What a page's form actions answered, for one of its forms. Actions on a page with several
// forms return `{ form: name, values, errors, message }`; a form shows only its own answer.

type Answer = { form?: unknown; values?: unknown; errors?: unknown; message?: unknown } | null;

export type FormFields = {
	values: Record<string, string>;
	errors: Record<string, string>;
	message: string | undefined;
};

/**
 * The values, field errors and message of the form named `name` (or of the page's only
 * form when `name` is omitted); `fallback` values when the answer was for another form.
 */
export function formFields(
	form: unknown,
	name?: string,
	fallback: Record<string, string> = {}
): FormFields {
	const answer = (form ?? null) as Answer;
	const mine = answer !== null && (name === undefined || answer.form === name);
	if (!mine) return { values: fallback, errors: {}, message: undefined };
	return {
		values: (answer.values as Record<string, string> | undefined) ?? fallback,
		errors: (answer.errors as Record<string, string> | undefined) ?? {},
		message: typeof answer.message === 'string' ? answer.message : undefined
	};
}

/** A confirmation step's answer (see runConfirmedForm in $lib/server/forms). */
export type Confirmation = {
	title: string;
	message: string;
	details: string[];
	yes: string;
	action: string;
	fields: [string, string][];
};

/**
 * The confirmation the action answered for the form named `name` (any form of the page
 * when `name` is omitted), or null when it answered something else.
 */
export function confirmationOf(form: unknown, name?: string): Confirmation | null {
	const answer = (form ?? null) as { form?: unknown; confirm?: unknown } | null;
	if (!answer || typeof answer.confirm !== 'object' || answer.confirm === null) return null;
	if (name !== undefined && answer.form !== name) return null;
	return answer.confirm as Confirmation;
}
