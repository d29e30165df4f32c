import { describe, expect, it } from 'vitest';
import { passwordProblem } from '$lib/domain/password-policy';
import { estimator, newPasswordProblem } from './password-policy';

const ada = { email: 'ada.lovelace@example.org', name: 'Ada Lovelace' };

// The real estimator (zxcvbn-ts with its common and English dictionaries), as the server uses it.
describe('passwordProblem with zxcvbn-ts', async () => {
	const zxcvbn = await estimator();
	const judge = (password: string, owner = ada) => passwordProblem(password, owner, zxcvbn);

	it('refuses the common and the guessable, with the reason', () => {
		expect(judge('aaaaaaaaaaaa')).toMatch(/repeated/i);
		expect(judge('password1234')).toMatch(/most common passwords/);
		expect(judge('qwertyuiop12')).toMatch(/common passwords|keyboard/i);
		expect(judge('ada.lovelace2026')).toMatch(/your name or your e-mail/);
		expect(judge('lovelaceada1815')).toMatch(/your name or your e-mail/);
		expect(judge('AdaLovelace2026')).toMatch(/your name or your e-mail/);
	});

	it('accepts a few unrelated words, and the passwords the demo and the tests use', () => {
		expect(judge('copper kettle orange lamp')).toBeNull();
		expect(
			judge('demo-pass-2026', { email: 'member@example.org', name: 'Mira Okafor' })
		).toBeNull();
		for (const password of [
			'test-password-2026',
			'a-long-enough-password',
			'another-long-password',
			'long-enough-password',
			'a-brand-new-password',
			'another-new-password'
		])
			expect(judge(password, { email: 'someone@example.org', name: 'Test member' })).toBeNull();
	});

	it('is what newPasswordProblem answers', async () => {
		expect(await newPasswordProblem('password1234', ada)).toBe(judge('password1234'));
		expect(await newPasswordProblem('copper kettle orange lamp', ada)).toBeNull();
	});

	it('answers a long, symbol-heavy password quickly (the estimate is bounded)', () => {
		const noisy = Array.from({ length: 256 }, (_, i) => String.fromCharCode(33 + ((i * 79) % 90)));
		const started = performance.now();
		judge(noisy.join(''));
		expect(performance.now() - started).toBeLessThan(1500);
	});
});
