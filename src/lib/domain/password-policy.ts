// The one password rule, for registration, a reset, an invitation and a password change.
// Long enough, not the person's own e-mail or name, and not guessable by the strength
// estimator's measure. The estimator (zxcvbn-ts with its dictionaries, a few megabytes) runs
// on the server only: server/password-policy.ts passes it in, so this file stays small
// enough for any page to import its numbers and its hint.
//
// Sources: NIST SP 800-63B §5.1.1.2 asks a verifier to refuse commonly used, expected or
// compromised passwords and context-specific words such as the user's name (from memory);
// score 3 of zxcvbn's 0-4 is its "safely unguessable" level, about 10^8 guesses or more
// (Wheeler, "zxcvbn: Low-Budget Password Strength Estimation", USENIX Security 2016, from
// memory). Twelve characters is this product's own minimum, kept from before.

export const MIN_PASSWORD_LENGTH = 12;
export const MAX_PASSWORD_LENGTH = 256;

/** The estimator's score a new password needs (0-4). */
export const MIN_PASSWORD_SCORE = 3;

/** Only so much of a long passphrase is estimated: the estimate's time grows fast with length. */
export const ESTIMATED_LENGTH = 64;

/** What the new-password fields say under themselves. */
export const PASSWORD_HINT =
	`At least ${MIN_PASSWORD_LENGTH} characters, and not a common password, your name or ` +
	'your e-mail address. A few unrelated words work well.';

export const passwordMessages = {
	tooShort: `Use at least ${MIN_PASSWORD_LENGTH} characters.`,
	tooLong: `Use at most ${MAX_PASSWORD_LENGTH} characters.`,
	email: 'It contains your e-mail address.',
	name: 'It is your name.',
	guessable: 'It is too easy to guess. Add another word or two that are less common.'
} as const;

/** Whose password it is: their words count as guessable. */
export type PasswordOwner = { email: string; name?: string | null };

/** The estimator's answer, as zxcvbn gives it. */
export type Estimate = {
	score: number;
	feedback: { warning: string | null; suggestions: string[] };
};

export type Estimator = (password: string, userInputs: string[]) => Estimate;

const fold = (text: string) => text.normalize('NFKC').toLowerCase().replace(/\s+/g, ' ').trim();

/**
 * The person's own words for the estimator: the e-mail, its local part and that part's
 * pieces ("ada.lovelace" → "ada", "lovelace"), the name run together either way round
 * ("adalovelace", "lovelaceada") and each of its words.
 */
export function personalWords(owner: PasswordOwner): string[] {
	const email = fold(owner.email);
	const local = email.split('@')[0] ?? '';
	const name = fold(owner.name ?? '');
	const names = name.split(/[\s.'-]+/);
	const words = [
		email,
		local,
		...local.split(/[._+-]+/),
		name,
		names.join(''),
		[...names].reverse().join(''),
		...names
	];
	return [...new Set(words.filter((w) => w.length >= 3))];
}

/** A refusal that needs no estimate: the e-mail inside the password, or the name itself. */
export function personalProblem(password: string, owner: PasswordOwner): string | null {
	const typed = fold(password);
	const email = fold(owner.email);
	if (email && typed.includes(email)) return passwordMessages.email;
	const name = fold(owner.name ?? '');
	if (name && (typed === name || typed.replace(/ /g, '') === name.replace(/ /g, '')))
		return passwordMessages.name;
	return null;
}

/** The estimator's own reason, in a sentence or two: its warning, then its first suggestion. */
export function reasonOf(estimate: Estimate): string {
	const { warning, suggestions } = estimate.feedback;
	const said = [warning, suggestions[0]].filter((s): s is string => Boolean(s)).join(' ');
	return said || passwordMessages.guessable;
}

/**
 * Why `password` may not be chosen by `owner`, or null when it may. The length first, then
 * the person's own e-mail and name, then the estimate with their words as guessable.
 */
export function passwordProblem(
	password: string,
	owner: PasswordOwner,
	estimate: Estimator
): string | null {
	if (password.length < MIN_PASSWORD_LENGTH) return passwordMessages.tooShort;
	if (password.length > MAX_PASSWORD_LENGTH) return passwordMessages.tooLong;
	const personal = personalProblem(password, owner);
	if (personal) return personal;
	const result = estimate(password.slice(0, ESTIMATED_LENGTH), personalWords(owner));
	return result.score >= MIN_PASSWORD_SCORE ? null : reasonOf(result);
}
