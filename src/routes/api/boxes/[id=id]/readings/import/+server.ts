import { json } from '@sveltejs/kit';
import { MAX_CSV_BYTES } from '$lib/domain/readings-csv';
import { serve } from '$lib/server/api';
import { requireRole } from '$lib/server/guard';
import { fail } from '$lib/server/http';
import { idParam } from '$lib/server/params';
import { importReadings, previewReadings } from '$lib/server/services/readings-import';
import type { RequestHandler } from './$types';

/**
 * A sensor's log as the request body (text/csv), or as the `file` field of a form upload.
 * `?preview=1` (or the form field `mode=preview`) stores nothing and answers 200
 * `{ preview, report }`: how the file was read (separator, decimal mark, columns by the
 * file's own header words, date formats, time zone, the first rows as read) and the report
 * the import would give. `?skipRejected=1` stores the good rows even when some are
 * rejected; without it a file with any rejected row stores nothing and comes back 422 with
 * the report.
 */
export const POST: RequestHandler = async (event) => {
	const user = requireRole(event, 'manager');
	const boxId = idParam(event.params.id, 'The box');
	const length = Number(event.request.headers.get('content-length') ?? 0);
	if (length > MAX_CSV_BYTES + 64 * 1024) tooLarge();
	const { text, mode } = await readCsv(event.request);
	if (event.url.searchParams.get('preview') === '1' || mode === 'preview')
		return json(await serve(() => previewReadings(boxId, text)));
	const report = await serve(() =>
		importReadings(user, boxId, text, {
			skipRejected: event.url.searchParams.get('skipRejected') === '1'
		})
	);
	if (!report.imported)
		fail(
			422,
			`${report.rejectedCount} row${report.rejectedCount === 1 ? '' : 's'} rejected; nothing was imported.`,
			{ report },
			'rows_rejected'
		);
	return json({ report }, { status: 201 });
};

function tooLarge(): never {
	fail(
		413,
		`The file is larger than ${MAX_CSV_BYTES / 1024 / 1024} MB; split the log and upload the parts.`
	);
}

async function readCsv(request: Request): Promise<{ text: string; mode: string | null }> {
	const type = request.headers.get('content-type') ?? '';
	try {
		if (type.startsWith('multipart/form-data')) {
			const form = await request.formData();
			const file = form.get('file');
			const mode = form.get('mode');
			if (mode !== null && mode !== 'preview' && mode !== 'import')
				fail(400, 'The mode is preview or import.', {
					fields: { mode: 'The mode is preview or import.' }
				});
			if (!(file instanceof File) || file.size === 0)
				fail(400, 'Choose a CSV file.', { fields: { file: 'Choose a CSV file.' } });
			if (file.size > MAX_CSV_BYTES) tooLarge();
			return { text: await file.text(), mode };
		}
		const text = await request.text();
		if (text.length > MAX_CSV_BYTES) tooLarge();
		return { text, mode: null };
	} catch (e) {
		// The server's own body limit ends the read of a body sent without a length.
		if ((e as { status?: number }).status === 413) tooLarge();
		throw e;
	}
}
