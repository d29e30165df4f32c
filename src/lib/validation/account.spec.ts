import { describe, expect, it } from 'vitest';
import { changePasswordSchema, registerSchema, signInSchema } from './account';
import { fieldErrors } from './fields';

describe('signInSchema', () => {
	it('normalises the e-mail', () => {
		expect(signInSchema.parse({ email: '  Member@Example.ORG ', password: 'x' })).toEqual({
			email: 'member@example.org',
			password: 'x'
		});
	});

	it('names each missing or bad field', () => {
		const result = signInSchema.safeParse({ email: 'not-an-address' });
		expect(result.success).toBe(false);
		expect(fieldErrors(result.error!)).toEqual({
			email: 'Enter a valid e-mail address.',
			password: 'Enter your password.'
		});
	});
});

describe('registerSchema', () => {
	const valid = { name: 'Ada', email: 'ada@example.org', password: 'twelve-chars', groupId: '3' };

	it('accepts a complete registration and coerces the group id', () => {
		expect(registerSchema.parse(valid)).toEqual({ ...valid, groupId: 3 });
	});

	it('needs a password of at least 12 characters', () => {
		const result = registerSchema.safeParse({ ...valid, password: 'eleven-char' });
		expect(fieldErrors(result.error!)).toEqual({ password: 'Use at least 12 characters.' });
	});

	it('needs a group', () => {
		const result = registerSchema.safeParse({ ...valid, groupId: '' });
		expect(Object.keys(fieldErrors(result.error!))).toEqual(['groupId']);
	});
});

describe('changePasswordSchema', () => {
	it('needs the two new passwords to match', () => {
		const result = changePasswordSchema.safeParse({
			currentPassword: 'old',
			newPassword: 'a-new-password',
			confirmPassword: 'a-new-passwort'
		});
		expect(fieldErrors(result.error!)).toEqual({
			confirmPassword: 'The two new passwords differ.'
		});
	});
});
