import { z } from 'zod';
import {
	MAX_PASSWORD_LENGTH,
	MIN_PASSWORD_LENGTH,
	passwordMessages
} from '$lib/domain/password-policy';
import { roles } from '$lib/domain/roles';

export { MIN_PASSWORD_LENGTH };

const email = z
	.string({ error: 'Enter your e-mail address.' })
	.trim()
	.toLowerCase()
	.min(1, 'Enter your e-mail address.')
	.max(254, 'That e-mail address is too long.')
	.pipe(z.email({ error: 'Enter a valid e-mail address.' }));

// The length here; the rest of the rule (common, guessable, the person's own e-mail or name)
// needs whose password it is and the estimator: the services call
// server/password-policy.ts's checkNewPassword with the same domain rule.
const newPassword = z
	.string({ error: 'Choose a password.' })
	.min(MIN_PASSWORD_LENGTH, passwordMessages.tooShort)
	.max(MAX_PASSWORD_LENGTH, passwordMessages.tooLong);

export const signInSchema = z.object({
	email,
	password: z.string({ error: 'Enter your password.' }).min(1, 'Enter your password.').max(256)
});

export const registerSchema = z.object({
	name: z
		.string({ error: 'Enter your name.' })
		.trim()
		.min(2, 'Enter your name.')
		.max(120, 'Use at most 120 characters.'),
	email,
	password: newPassword,
	groupId: z.coerce
		.number({ error: 'Choose the group you are joining.' })
		.int('Choose the group you are joining.')
		.positive('Choose the group you are joining.')
});

export const changePasswordSchema = z
	.object({
		currentPassword: z
			.string({ error: 'Enter your current password.' })
			.min(1, 'Enter your current password.')
			.max(256),
		newPassword,
		confirmPassword: z.string({ error: 'Repeat the new password.' })
	})
	.refine((v) => v.newPassword === v.confirmPassword, {
		message: 'The two new passwords differ.',
		path: ['confirmPassword']
	});

export const roleSchema = z.object({
	userId: z.coerce.number({ error: 'Choose a user.' }).int().positive('Choose a user.'),
	role: z.enum(['member', 'trainer', 'manager', 'admin'], { error: 'Choose a role.' })
});

export const decisionSchema = z.object({
	userId: z.coerce
		.number({ error: 'Choose an account to decide.' })
		.int()
		.positive('Choose an account to decide.')
});

export const joinSchema = z.strictObject({
	groupId: z.coerce
		.number({ error: 'Choose a group.' })
		.int('Choose a group.')
		.positive('Choose a group.')
});

export const emailPreferencesSchema = z.strictObject({ confirmations: z.boolean() });

const userId = z.coerce.number({ error: 'Choose a person.' }).int().positive('Choose a person.');

/** One person on /admin/users: deactivate, reactivate, send a reset link or the invitation again. */
export const accountSchema = z.strictObject({ userId });

/** "Forgot your password?": only the address, whatever it is the answer is the same. */
export const resetRequestSchema = z.strictObject({ email });

/** A new password from a reset link or an invitation: the registration's rules, typed twice. */
export const setPasswordSchema = z
	.strictObject({
		password: newPassword,
		confirmPassword: z.string({ error: 'Repeat the password.' }).max(256)
	})
	.refine((v) => v.password === v.confirmPassword, {
		message: 'The two passwords differ.',
		path: ['confirmPassword']
	});

/** An admin invites a person: they set their own password from the e-mail's link. */
export const inviteSchema = z.strictObject({
	name: z
		.string({ error: 'Enter their name.' })
		.trim()
		.min(2, 'Enter their name.')
		.max(120, 'Use at most 120 characters.'),
	email: z
		.string({ error: 'Enter their e-mail address.' })
		.trim()
		.toLowerCase()
		.min(1, 'Enter their e-mail address.')
		.max(254, 'That e-mail address is too long.')
		.pipe(z.email({ error: 'Enter a valid e-mail address.' })),
	role: z.enum(roles, { error: 'Choose a role.' }),
	groupId: z.coerce
		.number({ error: 'Choose one of the listed groups.' })
		.int('Choose one of the listed groups.')
		.positive('Choose one of the listed groups.')
		.optional()
});

export type InviteInput = z.output<typeof inviteSchema>;
