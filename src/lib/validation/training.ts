import { z } from 'zod';

export const grantSchema = z.object({
	userId: z.coerce.number({ error: 'Choose a person.' }).int().positive('Choose a person.'),
	moduleId: z.coerce.number({ error: 'Choose a module.' }).int().positive('Choose a module.'),
	grantedOn: z.iso.date({ error: 'Enter the training date.' }),
	note: z.string().trim().max(500, 'Use at most 500 characters.').optional()
});

export const revokeSchema = z.object({
	certificationId: z.coerce
		.number({ error: 'Choose a certification.' })
		.int()
		.positive('Choose a certification.'),
	reason: z
		.string({ error: 'Say why the certification is revoked.' })
		.trim()
		.min(1, 'Say why the certification is revoked.')
		.max(500)
});

export const moduleSchema = z.object({
	name: z.string({ error: 'Name the module.' }).trim().min(2, 'Name the module.').max(120),
	description: z.string().trim().max(2000).default(''),
	validityMonths: z.coerce
		.number({ error: 'Enter how many months it stays valid.' })
		.int('Whole months.')
		.min(1, 'At least 1 month.')
		.max(120, 'At most 120 months.'),
	prerequisiteIds: z.array(z.coerce.number().int().positive()).default([]),
	trainerIds: z.array(z.coerce.number().int().positive()).default([])
});
