import { serve } from '$lib/server/api';
import { requireRole } from '$lib/server/guard';
import { idParam } from '$lib/server/params';
import { removeDocument } from '$lib/server/services/documents';
import type { RequestHandler } from './$types';

/** Managers remove a box's documents; trainers and managers a module's (the service decides). */
export const DELETE: RequestHandler = async (event) => {
	const user = requireRole(event, 'trainer');
	const id = idParam(event.params.id, 'The document');
	await serve(() => removeDocument(user, id));
	return new Response(null, { status: 204 });
};
