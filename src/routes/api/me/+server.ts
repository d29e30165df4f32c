import { json } from '@sveltejs/kit';
import { requireUser } from '$lib/server/guard';
import { profile } from '$lib/server/services/accounts';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	const user = requireUser(event);
	return json({ ...(await profile(user.id)), certifications: [] });
};
