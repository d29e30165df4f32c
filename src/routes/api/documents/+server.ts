import { json } from '@sveltejs/kit';
import { MAX_DOCUMENT_BYTES } from '$lib/domain/documents';
import { serve } from '$lib/server/api';
import { requireRole } from '$lib/server/guard';
import { fail, invalidInput } from '$lib/server/http';
import { addDocument } from '$lib/server/services/documents';
import { documentFieldsSchema } from '$lib/validation/documents';
import { fieldErrors } from '$lib/validation/fields';
import type { RequestHandler } from './$types';

// Room in a multipart body for the boundaries, the title and the ids around the file.
const FORM_OVERHEAD_BYTES = 64 * 1024;

/**
 * A PDF as the `file` field of a multipart form, with `title` and either `boxId` or `moduleId`.
 * Managers attach to boxes; trainers and managers to training modules (the service decides).
 */
export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'trainer');
	// Refuse an oversized body by its declared length, before reading any of it.
	const length = Number(event.request.headers.get('content-length') ?? 0);
	if (length > MAX_DOCUMENT_BYTES + FORM_OVERHEAD_BYTES) tooLarge();
	const form = await readForm(event.request);
	const text = (name: string) => {
		const value = form.get(name);
		return typeof value === 'string' ? value : undefined;
	};
	const parsed = documentFieldsSchema.safeParse({
		title: text('title'),
		boxId: text('boxId'),
		moduleId: text('moduleId')
	});
	const fields = parsed.success ? {} : fieldErrors(parsed.error);
	const file = form.get('file');
	// A form posted without a file chosen sends an empty part with no name.
	if (!(file instanceof File) || (file.size === 0 && !file.name))
		fields.file = 'Choose a PDF file.';
	else if (file.size > MAX_DOCUMENT_BYTES) tooLarge();
	if (!parsed.success || !(file instanceof File) || fields.file) invalidInput(fields);
	const document = await serve(() => addDocument(user, { ...parsed.data, file }));
	return json(
		{
			document: {
				id: document.id,
				title: document.title,
				sizeBytes: document.sizeBytes,
				url: document.url
			}
		},
		{ status: 201 }
	);
};

function tooLarge(): never {
	fail(413, `The document is larger than ${MAX_DOCUMENT_BYTES / 1024 / 1024} MB.`, {
		fields: { file: `The document is larger than ${MAX_DOCUMENT_BYTES / 1024 / 1024} MB.` }
	});
}

async function readForm(request: Request): Promise<FormData> {
	const type = request.headers.get('content-type') ?? '';
	if (!type.startsWith('multipart/form-data'))
		fail(415, 'Send the document as multipart/form-data (fields file, title, boxId or moduleId).');
	try {
		return await request.formData();
	} catch (e) {
		// The server's own body limit ends the read of a body sent without a length.
		const err = e as { status?: number; cause?: { status?: number } };
		if (err.status === 413 || err.cause?.status === 413) tooLarge();
		fail(400, 'The upload could not be read; try again.', { fields: {} });
	}
}
