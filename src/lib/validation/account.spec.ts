import { describe, expect, it } from 'vitest';
import {
	changePasswordSchema,
	inviteSchema,
	registerSchema,
	setPasswordSchema,
	signInSchema
} from './account';
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

describe('setPasswordSchema', () => {
	it('holds a new password to the registration rules and needs it twice', () => {
		expect(
			fieldErrors(
				setPasswordSchema.safeParse({ password: 'short', confirmPassword: 'short' }).error!
			)
		).toEqual({ password: 'Use at least 12 characters.' });
		expect(
			fieldErrors(
				setPasswordSchema.safeParse({ password: 'twelve-chars', confirmPassword: 'twelve-charz' })
					.error!
			)
		).toEqual({ confirmPassword: 'The two passwords differ.' });
	});

	it('refuses a field it does not know by name', () => {
		const result = setPasswordSchema.safeParse({
			password: 'twelve-chars',
			confirmPassword: 'twelve-chars',
			userId: '3'
		});
		expect(result.success).toBe(false);
	});
});

describe('inviteSchema', () => {
	it('normalises the e-mail and leaves the group optional', () => {
		expect(
			inviteSchema.parse({ name: ' Ida ', email: 'Ida@Example.ORG', role: 'trainer' })
		).toEqual({ name: 'Ida', email: 'ida@example.org', role: 'trainer' });
		expect(
			inviteSchema.parse({ name: 'Ida', email: 'ida@example.org', role: 'member', groupId: '4' })
				.groupId
		).toBe(4);
	});

	it('names an unknown role', () => {
		const result = inviteSchema.safeParse({ name: 'Ida', email: 'ida@example.org', role: 'boss' });
		expect(fieldErrors(result.error!)).toEqual({ role: 'Choose a role.' });
	});
});
