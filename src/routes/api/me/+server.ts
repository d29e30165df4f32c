import { json } from '@sveltejs/kit';
import { requireUser } from '$lib/server/guard';
import { profile } from '$lib/server/services/accounts';
import { currentCertifications } from '$lib/server/services/training';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	const user = requireUser(event);
	const [me, certifications] = await Promise.all([
		profile(user.id),
		currentCertifications(user.id)
	]);
	return json({ ...me, certifications });
};
