import { json } from '@sveltejs/kit';
import { isoInZone } from '$lib/domain/time';
import { serve } from '$lib/server/api';
import { config } from '$lib/server/config';
import { requireRole } from '$lib/server/guard';
import { readJson } from '$lib/server/http';
import { grantCertification } from '$lib/server/services/training';
import { grantSchema } from '$lib/validation/training';
import type { RequestHandler } from './$types';

/** Certifies a person in a module: its trainers and managers, never for themselves. */
export const POST: RequestHandler = async (event) => {
	const actor = requireRole(event, 'trainer');
	const input = await readJson(event.request, grantSchema);
	const cert = await serve(() => grantCertification(actor, input));
	return json(
		{
			certification: {
				id: cert.id,
				userId: cert.userId,
				moduleId: cert.moduleId,
				moduleName: cert.moduleName,
				grantedAt: isoInZone(cert.grantedAt, config.facilityTz),
				expiresAt: isoInZone(cert.expiresAt, config.facilityTz),
				closedRequestId: cert.requestId
			}
		},
		{ status: 201 }
	);
};
