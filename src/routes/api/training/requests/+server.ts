import { json } from '@sveltejs/kit';
import { isoInZone } from '$lib/domain/time';
import { serve } from '$lib/server/api';
import { config } from '$lib/server/config';
import { requireRole, requireUser } from '$lib/server/guard';
import { readJson } from '$lib/server/http';
import { openRequestsFor, requestTraining } from '$lib/server/services/training-requests';
import { trainingRequestSchema } from '$lib/validation/training';
import type { RequestHandler } from './$types';

/** Open requests for the modules the trainer teaches (every one for managers). */
export const GET: RequestHandler = async (event) => {
	const user = requireRole(event, 'trainer');
	const requests = await serve(() => openRequestsFor(user));
	return json({
		requests: requests.map((r) => ({
			id: r.id,
			userId: r.userId,
			userName: r.userName,
			moduleId: r.moduleId,
			moduleName: r.moduleName,
			note: r.note,
			at: isoInZone(r.createdAt, config.facilityTz)
		}))
	});
};

/** Asks for training in a module; its trainers are told. */
export const POST: RequestHandler = async (event) => {
	const user = requireUser(event);
	const input = await readJson(event.request, trainingRequestSchema);
	const request = await serve(() => requestTraining(user, input));
	return json(
		{
			request: {
				id: request.id,
				userId: request.userId,
				moduleId: request.moduleId,
				moduleName: request.moduleName,
				note: request.note,
				status: request.status,
				at: isoInZone(request.createdAt, config.facilityTz)
			}
		},
		{ status: 201 }
	);
};
