import { z } from 'zod';
import { isoDateTime } from './bookings';

/**
 * An object that refuses any field it does not name, under that field's own name (as
 * `details.fields` reports it); `z.strictObject` would report them under the whole input.
 */
const strict = <S extends z.ZodRawShape>(shape: S) =>
	z.object(shape).catchall(z.undefined({ error: 'Not a field of this request.' }));

const id = (message: string) => z.coerce.number({ error: message }).int(message).positive(message);

const note = z.string().trim().max(500, 'Use at most 500 characters.');

/**
 * A certification: `POST /api/certifications` and the "Record training" form. Without a
 * training date it is recorded now; without an expiry it follows from the module's validity.
 */
export const grantSchema = strict({
	userId: id('Choose a person.'),
	moduleId: id('Choose a module.'),
	grantedOn: z.iso.date({ error: 'Enter the training date.' }).optional(),
	expiresAt: isoDateTime('expiry').optional(),
	note: note.optional()
});

export type GrantInput = z.output<typeof grantSchema>;

export const revokeSchema = strict({
	certificationId: id('Choose a certification.'),
	reason: z
		.string({ error: 'Say why the certification is revoked.' })
		.trim()
		.min(1, 'Say why the certification is revoked.')
		.max(500, 'Use at most 500 characters.')
});

/** Adding a module, and editing one (the module's id comes from the route or form). */
export const moduleSchema = strict({
	name: z.string({ error: 'Name the module.' }).trim().min(2, 'Name the module.').max(120),
	description: z.string().trim().max(2000, 'Use at most 2,000 characters.').default(''),
	validityMonths: z.coerce
		.number({ error: 'Enter how many months it stays valid.' })
		.int('Whole months.')
		.min(1, 'At least 1 month.')
		.max(120, 'At most 120 months.'),
	prerequisiteIds: z.array(z.coerce.number().int().positive()).max(50).default([]),
	trainerIds: z.array(z.coerce.number().int().positive()).max(50).default([])
});

export type ModuleInput = z.output<typeof moduleSchema>;

/** `POST /api/training/requests` and the "Request training" buttons. */
export const trainingRequestSchema = strict({
	moduleId: id('Choose a module.'),
	note: note.optional()
});

export type TrainingRequestInput = z.output<typeof trainingRequestSchema>;

/** A trainer declining a request: the reason goes to the person. */
export const declineRequestSchema = strict({
	requestId: id('Choose a request.'),
	reason: z
		.string({ error: 'Say why; the person is told.' })
		.trim()
		.min(3, 'Say why; the person is told.')
		.max(500, 'Use at most 500 characters.')
});

/** The person taking back their own open request. */
export const withdrawRequestSchema = strict({ requestId: id('Choose a request.') });
