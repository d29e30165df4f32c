import { json } from '@sveltejs/kit';
import { checkDatabase } from '$lib/server/services/health';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async () => {
	await checkDatabase();
	return json({ ok: true });
};
