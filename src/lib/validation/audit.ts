import { DateTime } from 'luxon';
import { z } from 'zod';

const day = z
	.string()
	.regex(/^\d{4}-\d{2}-\d{2}$/, 'Use a date like 2026-03-01.')
	.refine((v) => DateTime.fromISO(v).isValid, 'There is no such date.');

/** The audit screen's filters, read from its query string (empty fields left out). */
export const auditFilterSchema = z
	.strictObject({
		actorId: z.coerce
			.number({ error: 'Choose a person from the list.' })
			.int('Choose a person from the list.')
			.positive('Choose a person from the list.')
			.optional(),
		entity: z
			.string()
			.trim()
			.max(40, 'Use at most 40 characters.')
			.regex(/^[a-z_]+$/, 'Choose a kind of record from the list.')
			.optional(),
		entityId: z.string().trim().max(64, 'Use at most 64 characters.').optional(),
		from: day.optional(),
		to: day.optional(),
		// A page number from a hand-edited address that cannot be one shows the first page.
		page: z.preprocess((v) => {
			const n = Number(v);
			return Number.isInteger(n) && n >= 1 ? Math.min(n, 10_000) : 1;
		}, z.number())
	})
	.refine((f) => !f.from || !f.to || f.from <= f.to, {
		message: 'The last day comes before the first.',
		path: ['to']
	})
	.refine((f) => !f.entityId || f.entity, {
		message: 'Choose the kind of record the id belongs to.',
		path: ['entity']
	});

export type AuditFilterInput = z.output<typeof auditFilterSchema>;
