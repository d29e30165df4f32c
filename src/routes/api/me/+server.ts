import { json } from '@sveltejs/kit';
import { requireUser } from '$lib/server/guard';
import { profile } from '$lib/server/services/accounts';
import { currentCertifications } from '$lib/server/services/training';
import { teachingOf } from '$lib/server/services/training-modules';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	const user = requireUser(event);
	const [me, certifications, teaches] = await Promise.all([
		profile(user.id),
		currentCertifications(user.id),
		teachingOf(user)
	]);
	return json({ ...me, certifications, teaches });
};
