import { requireUser } from '$lib/server/guard';
import type { PageServerLoad } from './$types';

// The calculators run in the browser from the pure domain modules; the page only needs a user.
export const load: PageServerLoad = async (event) => {
	requireUser(event);
	return {};
};
