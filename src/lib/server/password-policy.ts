// The password rule of domain/password-policy.ts with its estimator: zxcvbn-ts and its
// common and English dictionaries, loaded on first use (a few megabytes, never sent to a
// browser). Every service that sets a password calls checkNewPassword before hashing it.
import {
	ESTIMATED_LENGTH,
	passwordProblem,
	type Estimator,
	type PasswordOwner
} from '$lib/domain/password-policy';
import { ServiceError } from './errors';

let loading: Promise<Estimator> | undefined;

/** The estimator, built once per process. */
export function estimator(): Promise<Estimator> {
	loading ??= (async () => {
		const [{ ZxcvbnFactory }, common, en] = await Promise.all([
			import('@zxcvbn-ts/core'),
			import('@zxcvbn-ts/language-common'),
			import('@zxcvbn-ts/language-en')
		]);
		const common10 = 'This is one of the most common passwords.';
		const zxcvbn = new ZxcvbnFactory({
			dictionary: { ...common.dictionary, ...en.dictionary },
			graphs: common.adjacencyGraphs,
			translations: {
				...en.translations,
				warnings: {
					...en.translations.warnings,
					topTen: common10,
					topHundred: common10,
					common: common10,
					similarToCommon: 'This is too close to one of the most common passwords.',
					userInputs: 'It uses your name or your e-mail address.'
				}
			},
			// Bounds on the work per check: a long or symbol-heavy password otherwise holds the
			// process for seconds (measured here: 3 s for 256 characters).
			maxLength: ESTIMATED_LENGTH,
			l33tMaxSubstitutions: 10
		});
		return (password, userInputs) => zxcvbn.check(password, userInputs);
	})();
	return loading;
}

/** Why `password` may not be chosen by `owner`, or null. */
export async function newPasswordProblem(
	password: string,
	owner: PasswordOwner
): Promise<string | null> {
	return passwordProblem(password, owner, await estimator());
}

/**
 * Refuses a password the rule does not accept: 400 with the reason under `field` (the
 * form's field name; the API reports it in `details.fields`).
 */
export async function checkNewPassword(
	password: string,
	owner: PasswordOwner,
	field = 'password'
): Promise<void> {
	const problem = await newPasswordProblem(password, owner);
	if (problem)
		throw new ServiceError(400, 'Choose a password that is harder to guess.', {
			fields: { [field]: problem }
		});
}
