import { z } from 'zod';
import { DOCUMENT_TITLE_MAX, DOCUMENT_TITLE_MIN } from '$lib/domain/documents';

const titleMessage = `Give the document a title (${DOCUMENT_TITLE_MIN}–${DOCUMENT_TITLE_MAX} characters).`;

// A form sends an empty string for a field it has but the user left alone.
const optionalId = (what: string) =>
	z.preprocess(
		(v) => (v === '' || v === null ? undefined : v),
		z.coerce
			.number({ error: `${what} is not a valid id.` })
			.int(`${what} is not a valid id.`)
			.positive(`${what} is not a valid id.`)
			.optional()
	);

/** The fields of an upload besides the file: a title and exactly one of boxId, moduleId. */
export const documentFieldsSchema = z
	.object({
		title: z
			.string({ error: titleMessage })
			.trim()
			.min(DOCUMENT_TITLE_MIN, titleMessage)
			.max(DOCUMENT_TITLE_MAX, titleMessage),
		boxId: optionalId('The box'),
		moduleId: optionalId('The training module')
	})
	.superRefine((v, ctx) => {
		if ((v.boxId === undefined) === (v.moduleId === undefined)) {
			ctx.addIssue({
				code: 'custom',
				path: [v.boxId === undefined ? 'boxId' : 'moduleId'],
				message: 'Attach the document to either a box or a training module.'
			});
		}
	});

export type DocumentFields = z.output<typeof documentFieldsSchema>;
