import { documentFileName } from '$lib/domain/documents';
import { errorResponse } from '$lib/server/http';
import { openDocument } from '$lib/server/services/documents';
import { attempt } from '$lib/server/services/errors';
import { idParam } from '$lib/server/params';
import type { RequestHandler } from './$types';

// An SOP for anyone signed in. The link is opened outside /api/, so this route answers its
// errors in the contract's shape itself; signed out is 401 here, not the pages' redirect.
export const GET: RequestHandler = async (event) => {
	const user = event.locals.user;
	if (!user) return errorResponse(401, 'Sign in first.', 'unauthenticated');
	const id = idParam(event.params.id, 'The document');
	const result = await attempt(() => openDocument(user, id));
	if (!result.ok)
		return errorResponse(
			result.error.status,
			result.error.message,
			result.error.code,
			result.error.details
		);
	const { bytes, title } = result.value;
	return new Response(bytes as BodyInit, {
		headers: {
			'content-type': 'application/pdf',
			'content-length': String(bytes.byteLength),
			'content-disposition': `inline; filename="${documentFileName(title)}"`,
			'x-content-type-options': 'nosniff',
			'cache-control': 'private'
		}
	});
};
