import { describe, expect, it, vi } from 'vitest';
import {
	ESTIMATED_LENGTH,
	MIN_PASSWORD_SCORE,
	passwordMessages,
	passwordProblem,
	personalProblem,
	personalWords,
	reasonOf,
	type Estimate
} from './password-policy';

const ada = { email: 'ada.lovelace@example.org', name: 'Ada Lovelace' };
const strong: Estimate = { score: 4, feedback: { warning: null, suggestions: [] } };

// The rule with a stand-in estimator: what reaches it, and what its answer becomes.
describe('passwordProblem', () => {
	it('checks the length before anything else', () => {
		const estimate = vi.fn(() => strong);
		expect(passwordProblem('short-one', ada, estimate)).toBe(passwordMessages.tooShort);
		expect(passwordProblem('x'.repeat(257), ada, estimate)).toBe(passwordMessages.tooLong);
		expect(estimate).not.toHaveBeenCalled();
	});

	it('refuses the e-mail inside a password and the name as the password, without an estimate', () => {
		const estimate = vi.fn(() => strong);
		expect(passwordProblem('ADA.Lovelace@example.org!', ada, estimate)).toBe(
			passwordMessages.email
		);
		expect(passwordProblem('  ada   LOVELACE ', ada, estimate)).toBe(passwordMessages.name);
		const longName = { email: 'x@example.org', name: 'Augusta Ada King' };
		expect(passwordProblem('augusta ada king', longName, estimate)).toBe(passwordMessages.name);
		expect(passwordProblem('AugustaAdaKing', longName, estimate)).toBe(passwordMessages.name);
		expect(estimate).not.toHaveBeenCalled();
	});

	it('gives the estimator the person’s words and only the first characters of a long password', () => {
		const estimate = vi.fn((_password: string, _inputs: string[]) => strong);
		const long = 'copper kettle under a quiet orange lamp '.repeat(4);
		expect(passwordProblem(long, ada, estimate)).toBeNull();
		expect(estimate.mock.calls[0][0]).toBe(long.slice(0, ESTIMATED_LENGTH));
		expect(estimate.mock.calls[0][1]).toEqual(personalWords(ada));
	});

	it(`needs score ${MIN_PASSWORD_SCORE} and answers with the estimator's reason below it`, () => {
		const at =
			(score: number, warning: string | null, suggestions: string[] = []) =>
			() => ({
				score,
				feedback: { warning, suggestions }
			});
		expect(passwordProblem('some-long-password', ada, at(3, null))).toBeNull();
		expect(passwordProblem('some-long-password', ada, at(2, 'Dates are easy to guess.'))).toBe(
			'Dates are easy to guess.'
		);
		expect(passwordProblem('some-long-password', ada, at(1, null))).toBe(
			passwordMessages.guessable
		);
	});
});

describe('personalWords and personalProblem', () => {
	it('splits the e-mail and the name into the words an attacker would try', () => {
		expect(personalWords(ada)).toEqual([
			'ada.lovelace@example.org',
			'ada.lovelace',
			'ada',
			'lovelace',
			'ada lovelace',
			'adalovelace',
			'lovelaceada'
		]);
	});

	it('lets a password that merely shares a word with the name reach the estimator', () => {
		expect(personalProblem('lovelace and the analytical engine', ada)).toBeNull();
	});
});

describe('reasonOf', () => {
	it('puts the warning first and one suggestion after it', () => {
		expect(reasonOf({ score: 1, feedback: { warning: 'W.', suggestions: ['S1.', 'S2.'] } })).toBe(
			'W. S1.'
		);
		expect(reasonOf({ score: 1, feedback: { warning: null, suggestions: ['S1.'] } })).toBe('S1.');
	});
});
